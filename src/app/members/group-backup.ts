import { Component, inject, signal } from '@angular/core';
import { MatButtonModule } from '@angular/material/button';
import { MatCheckboxModule } from '@angular/material/checkbox';
import { MatDialog } from '@angular/material/dialog';
import { MatIconModule } from '@angular/material/icon';
import { MatProgressBarModule } from '@angular/material/progress-bar';
import { MatSnackBar } from '@angular/material/snack-bar';
import { firstValueFrom } from 'rxjs';
import { confirmAction } from '../core/confirm/confirm-dialog';
import { CurrentGroup } from '../core/group/current-group';
import { type Problem, toProblem } from '../core/errors/problem';
import { GroupBackupApi } from './group-backup-api';

/**
 * Backup and restore of the whole group, on the members page for admins: download
 * the archive, or restore one into this group when it is still empty.
 */
@Component({
  selector: 'pw-group-backup',
  imports: [MatButtonModule, MatCheckboxModule, MatIconModule, MatProgressBarModule],
  templateUrl: './group-backup.html',
  styleUrl: './group-backup.scss',
})
export class GroupBackup {
  private readonly api = inject(GroupBackupApi);
  private readonly dialog = inject(MatDialog);
  private readonly snackBar = inject(MatSnackBar);
  private readonly currentGroup = inject(CurrentGroup);

  protected readonly group = this.currentGroup.group;
  protected readonly includeMembers = signal(true);
  protected readonly busy = signal(false);
  protected readonly problem = signal<Problem | null>(null);

  protected downloadUrl(): string | null {
    const id = this.currentGroup.id();
    return id ? this.api.downloadUrl(id, this.includeMembers()) : null;
  }

  protected async restore(input: HTMLInputElement): Promise<void> {
    const file = input.files?.[0];
    input.value = '';
    const groupId = this.currentGroup.id();
    if (!file || !groupId) return;
    const name = this.group()?.name ?? 'this group';
    const yes = await firstValueFrom(
      confirmAction(this.dialog, {
        title: `Restore ${file.name} into ${name}?`,
        message: `Everything in the backup (models, runs, resonances, mode images) is added to ${name}. This works only while the group has no models and no runs; a file with any problem is refused whole and nothing is written.`,
        confirmLabel: 'Restore',
      }),
    );
    if (!yes) return;
    this.problem.set(null);
    this.busy.set(true);
    try {
      const summary = await firstValueFrom(this.api.restore(groupId, file));
      this.snackBar.open(`Restored ${summary['models'] ?? 0} model(s), ${summary['runs'] ?? 0} run(s) and ${summary['resonances'] ?? 0} resonance(s).`, 'OK', {
        duration: 8000,
      });
    } catch (err) {
      this.problem.set(toProblem(err));
    } finally {
      this.busy.set(false);
    }
  }
}
