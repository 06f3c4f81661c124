import { escapeHtml } from './escape-html.js';
import type { MailMessage } from './mailer.js';

/** The invitation e-mail; the link carries the one-time token. */
export function invitationMail(p: { to: string; inviterName: string; groupName: string; role: string; link: string; expiresAt: Date }): MailMessage {
  const until = p.expiresAt.toUTCString();
  return {
    to: p.to,
    subject: `${p.inviterName} invites you to ${p.groupName} on Poleward`,
    text:
      `${p.inviterName} invites you to join ${p.groupName} on Poleward as ${p.role}.\n\n` +
      `Open this link to accept (valid until ${until}):\n${p.link}\n\n` +
      `If you did not expect this, ignore this e-mail.\n`,
    html:
      `<p>${escapeHtml(p.inviterName)} invites you to join <b>${escapeHtml(p.groupName)}</b> on Poleward as ${escapeHtml(p.role)}.</p>` +
      `<p><a href="${escapeHtml(p.link)}">Accept the invitation</a> (valid until ${escapeHtml(until)}).</p>` +
      `<p>If you did not expect this, ignore this e-mail.</p>`,
  };
}
