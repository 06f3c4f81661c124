import { Component, inject } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatMenuModule } from '@angular/material/menu';
import { Router } from '@angular/router';
import { Auth } from '../auth/auth';
import { roleLabel } from '../auth/role-label';
import type { GroupOfUser } from '../../../../shared/api/auth';
import { CurrentGroup } from '../group/current-group';

/** Toolbar menu that moves the user to the same area of another of their groups. */
@Component({
  selector: 'pw-group-switcher',
  imports: [MatButtonModule, MatIconModule, MatMenuModule],
  template: `
    @if (current(); as group) {
      <button mat-button type="button" class="trigger" [matMenuTriggerFor]="menu" [attr.aria-label]="'Group: ' + group.name + '. Switch group'">
        <mat-icon aria-hidden="true">groups</mat-icon>
        <span class="name">{{ group.name }}</span>
        <mat-icon iconPositionEnd aria-hidden="true">arrow_drop_down</mat-icon>
      </button>
      <mat-menu #menu="matMenu">
        @for (g of groups(); track g.id) {
          <button mat-menu-item type="button" (click)="switchTo(g)" [attr.aria-current]="g.id === group.id ? 'true' : null">
            <mat-icon aria-hidden="true">{{ g.id === group.id ? 'check' : 'groups' }}</mat-icon>
            <span class="item">
              <span class="item-name">{{ g.name }}</span>
              <span class="role">{{ roleLabel[g.role] }}</span>
            </span>
          </button>
        }
      </mat-menu>
    }
  `,
  styles: `
    .trigger {
      max-width: 420px;
    }
    .name {
      overflow: hidden;
      text-overflow: ellipsis;
      white-space: nowrap;
    }
    .item {
      display: flex;
      flex-direction: column;
      padding: 4px 0;
    }
    .item-name {
      white-space: nowrap;
    }
    .role {
      font: var(--mat-sys-body-small);
      color: var(--mat-sys-on-surface-variant);
    }
  `,
})
export class GroupSwitcher {
  private readonly router = inject(Router);
  private readonly currentGroup = inject(CurrentGroup);

  protected readonly groups = inject(Auth).groups;
  protected readonly current = this.currentGroup.group;
  protected readonly roleLabel = roleLabel;

  /** Keeps the area (dashboard, members...) but not deeper ids: those belong to the old group. */
  protected switchTo(group: GroupOfUser): void {
    const segments = this.router.parseUrl(this.router.url).root.children['primary']?.segments ?? [];
    const area = segments[0]?.path === 'g' && segments[2] ? segments[2].path : 'dashboard';
    void this.router.navigate(['/g', group.slug, area]);
  }
}
