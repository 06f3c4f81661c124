import { Injectable, computed, inject, signal } from '@angular/core';
import { takeUntilDestroyed } from '@angular/core/rxjs-interop';
import { type ActivatedRouteSnapshot, NavigationEnd, Router } from '@angular/router';
import { filter } from 'rxjs';
import { Auth } from '../auth/auth';

/**
 * The group the user is working in, taken from `/g/:groupSlug/...` in the URL. Pages
 * outside a group (API tokens, outbox) keep the last one, so the navigation still
 * points somewhere sensible.
 */
@Injectable({ providedIn: 'root' })
export class CurrentGroup {
  private readonly auth = inject(Auth);
  private readonly router = inject(Router);
  private readonly slugFromUrl = signal<string | null>(null);

  readonly slug = computed(() => this.slugFromUrl() ?? this.auth.groups()[0]?.slug ?? null);
  readonly group = computed(() => this.auth.groups().find((g) => g.slug === this.slug()) ?? null);
  readonly id = computed(() => this.group()?.id ?? null);
  readonly isAdmin = computed(() => this.group()?.role === 'admin');

  constructor() {
    this.pick();
    this.router.events
      .pipe(
        filter((e) => e instanceof NavigationEnd),
        takeUntilDestroyed(),
      )
      .subscribe(() => this.pick());
  }

  private pick(): void {
    const slug = findSlug(this.router.routerState.snapshot.root);
    if (slug) this.slugFromUrl.set(slug);
  }
}

function findSlug(route: ActivatedRouteSnapshot): string | null {
  const own = route.paramMap.get('groupSlug');
  if (own) return own;
  for (const child of route.children) {
    const found = findSlug(child);
    if (found) return found;
  }
  return null;
}
