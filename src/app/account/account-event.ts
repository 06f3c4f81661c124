import type { ActivityEntry } from '../../../shared/api/account';

/** One account entry in words, and whether it deserves the person's attention. */
interface AccountEvent {
  text: string;
  /** Worth a second look: a failure, a refusal, or someone reading mail sent to you. */
  alert: boolean;
  /** Where it came from, when recorded. */
  ip: string | null;
}

const str = (v: unknown): string | null => (typeof v === 'string' ? v : null);
const num = (v: unknown): number => (typeof v === 'number' ? v : 0);
const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`;

/** Describes the audit actions docs/api.md lists for accounts; unknown ones are spelled out. */
export function accountEvent(e: ActivityEntry): AccountEvent {
  const d = e.details;
  const ip = str(d['ip']);
  const by = e.actor ? ` by ${e.actor.name}` : '';
  switch (e.action) {
    case 'auth.signed_in':
      return { text: 'Signed in', alert: false, ip };
    case 'auth.signed_out':
      return { text: 'Signed out (the session was ended on the server)', alert: false, ip };
    case 'auth.sign_in_failed':
      return {
        text: d['via'] === 'invitation' ? 'Wrong password given while accepting an invitation' : 'Failed sign-in: wrong password',
        alert: true,
        ip,
      };
    case 'security.rate_limited':
      return { text: `Refused: too many attempts (${e.subject})`, alert: true, ip };
    case 'security.csrf_refused':
      return { text: `Refused a request that lacked this session's CSRF value (${e.subject})`, alert: true, ip };
    case 'account.renamed':
      return { text: `Name changed from ${str(d['from']) ?? '?'} to ${str(d['to']) ?? '?'}`, alert: false, ip };
    case 'account.password_changed':
      return { text: `Password changed here; ${plural(num(d['sessionsEnded']), 'session', 'sessions')} ended`, alert: false, ip };
    case 'account.password_change_refused':
      return { text: 'Password change refused: the current password given was wrong', alert: true, ip };
    case 'account.signed_out_everywhere':
      return { text: `Signed out everywhere: ${plural(num(d['sessionsEnded']), 'session', 'sessions')} ended`, alert: false, ip };
    case 'auth.password_reset_requested':
      return { text: 'Password-reset link requested', alert: false, ip };
    case 'auth.password_reset':
      return {
        text:
          `Password changed with a reset link: ${plural(num(d['sessionsEnded']), 'session', 'sessions')} signed out, ` +
          `${plural(num(d['tokensRevoked']), 'API token', 'API tokens')} revoked`,
        alert: false,
        ip,
      };
    case 'api_token.created':
      return { text: `API token “${e.subject}” created`, alert: false, ip };
    case 'api_token.revoked':
      return { text: `API token “${e.subject}” revoked`, alert: false, ip };
    case 'member.role_changed':
      return { text: `Your role in a group changed from ${str(d['from']) ?? '?'} to ${str(d['to']) ?? '?'}${by}`, alert: false, ip };
    case 'member.removed':
      return { text: `Removed from a group${by}`, alert: false, ip };
    case 'invitation.accepted':
      return { text: `Joined a group as ${str(d['role']) ?? 'member'}`, alert: false, ip };
    case 'outbox.read':
      return { text: `The site operator${e.actor ? ` (${e.actor.name})` : ''} opened mail sent to you: “${e.subject}”`, alert: true, ip };
    case 'outbox.listed':
      return { text: 'You opened the mail outbox', alert: false, ip };
    case 'catalogue.exported':
      return { text: `You exported the catalogue (${e.subject})`, alert: false, ip };
    default:
      return { text: `${e.action.replace(/[._-]+/g, ' ')}: ${e.subject}`, alert: false, ip };
  }
}
