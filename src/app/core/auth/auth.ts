import { HttpErrorResponse } from '@angular/common/http';
import { Injectable, computed, inject, signal } from '@angular/core';
import { firstValueFrom } from 'rxjs';
import { AuthApi } from './auth-api';
import type { Session } from '../../../../shared/api/auth';

/**
 * The signed-in session as signals. `undefined` means "not asked yet", `null` means
 * signed out; the guard waits for `load()` so a page reload keeps the user in.
 */
@Injectable({ providedIn: 'root' })
export class Auth {
  private readonly api = inject(AuthApi);
  private readonly state = signal<Session | null | undefined>(undefined);
  private pending: Promise<Session | null> | null = null;

  readonly session = this.state.asReadonly();
  readonly user = computed(() => this.state()?.user ?? null);
  readonly groups = computed(() => this.state()?.groups ?? []);
  readonly signedIn = computed(() => !!this.state());
  readonly csrfToken = computed(() => this.state()?.csrfToken ?? null);
  readonly adminSomewhere = computed(() => this.groups().some((g) => g.role === 'admin'));
  /** The outbox answers only the site operator, so the menu and dashboard hide it for others. */
  readonly siteOperator = computed(() => this.state()?.siteOperator ?? false);

  /** Asks the server once who is signed in; 401 means nobody, other failures propagate. */
  load(): Promise<Session | null> {
    const known = this.state();
    if (known !== undefined) return Promise.resolve(known);
    this.pending ??= firstValueFrom(this.api.session())
      .then((s) => {
        this.state.set(s);
        return s;
      })
      .catch((err: unknown) => {
        if (err instanceof HttpErrorResponse && err.status === 401) {
          this.state.set(null);
          return null;
        }
        throw err;
      })
      .finally(() => (this.pending = null));
    return this.pending;
  }

  /** Asks again after something changed the user's own memberships (own role, own removal). */
  async refresh(): Promise<Session | null> {
    this.state.set(undefined);
    return this.load();
  }

  async signIn(email: string, password: string): Promise<Session> {
    const s = await firstValueFrom(this.api.signIn(email, password));
    this.state.set(s);
    return s;
  }

  async signOut(): Promise<void> {
    try {
      await firstValueFrom(this.api.signOut());
    } finally {
      this.state.set(null);
    }
  }

  /** Takes a session the server handed out elsewhere (accepting an invitation signs in). */
  adopt(session: Session): void {
    this.state.set(session);
  }

  /** Forgets the session after the server said 401 (cookie expired or revoked). */
  forget(): void {
    this.state.set(null);
  }
}
