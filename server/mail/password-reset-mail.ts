import { escapeHtml } from './escape-html.js';
import type { MailMessage } from './mailer.js';

/** The password-reset e-mail; the link works once, for one hour. */
export function passwordResetMail(p: { to: string; name: string; link: string }): MailMessage {
  const consequence =
    'Choosing a new password signs out every session of your account and revokes your personal API tokens; ' + 'scripts and notebooks then need a new token.';
  return {
    to: p.to,
    subject: 'Reset your Poleward password',
    text:
      `Hello ${p.name},\n\nSomeone (hopefully you) asked to reset your Poleward password.\n` +
      `Open this link within one hour to choose a new one; it works once:\n${p.link}\n\n` +
      `${consequence}\n\n` +
      `If you did not ask, ignore this e-mail: your password stays as it is.\n`,
    html:
      `<p>Hello ${escapeHtml(p.name)},</p><p>Someone (hopefully you) asked to reset your Poleward password.</p>` +
      `<p><a href="${escapeHtml(p.link)}">Choose a new password</a> within one hour; the link works once.</p>` +
      `<p>${escapeHtml(consequence)}</p>` +
      `<p>If you did not ask, ignore this e-mail: your password stays as it is.</p>`,
  };
}
