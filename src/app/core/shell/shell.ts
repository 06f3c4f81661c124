import { BreakpointObserver } from '@angular/cdk/layout';
import { Component, computed, inject } from '@angular/core';
import { toSignal } from '@angular/core/rxjs-interop';
import { MatButtonModule } from '@angular/material/button';
import { MatIconModule } from '@angular/material/icon';
import { MatListModule } from '@angular/material/list';
import { MatSidenavModule } from '@angular/material/sidenav';
import { MatToolbarModule } from '@angular/material/toolbar';
import { RouterLink, RouterLinkActive, RouterOutlet } from '@angular/router';
import { map } from 'rxjs';
import { CurrentGroup } from '../group/current-group';
import { areas } from './areas';
import { GroupSwitcher } from './group-switcher';
import { UserMenu } from './user-menu';

/** Below this width the side navigation floats over the page instead of taking room (1280×720 laptops keep it). */
const narrowQuery = '(max-width: 1099.98px)';

/** The frame of every signed-in page: toolbar, side navigation, the routed page. */
@Component({
  selector: 'pw-shell',
  imports: [
    RouterOutlet,
    RouterLink,
    RouterLinkActive,
    MatToolbarModule,
    MatSidenavModule,
    MatListModule,
    MatIconModule,
    MatButtonModule,
    GroupSwitcher,
    UserMenu,
  ],
  templateUrl: './shell.html',
  styleUrl: './shell.scss',
})
export class Shell {
  private readonly currentGroup = inject(CurrentGroup);

  protected readonly areas = areas;
  protected readonly slug = this.currentGroup.slug;
  protected readonly narrow = toSignal(
    inject(BreakpointObserver)
      .observe(narrowQuery)
      .pipe(map((state) => state.matches)),
    { initialValue: false },
  );
  protected readonly navMode = computed(() => (this.narrow() ? 'over' : 'side'));
}
