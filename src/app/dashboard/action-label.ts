/** Verbs for the audit actions docs/api.md lists; the subject follows them in the sentence. */
const verbs: Record<string, string> = {
  'invitation.created': 'invited',
  'invitation.revoked': 'withdrew the invitation of',
  'invitation.accepted': 'accepted the invitation for',
  'member.role_changed': 'changed the role of',
  'member.removed': 'removed',
  'catalogue.exported': 'exported',
  'auth.sign_in_failed': 'gave a wrong password accepting an invitation for',
  'security.csrf_refused': 'was refused (no valid CSRF value) on',
  'security.rate_limited': 'was refused (too many attempts) on',
};

/**
 * Turns an audit action code into words: a verb for the known ones, and the code
 * itself spelled out ("model.created" → "model created") for codes added later.
 */
export function actionLabel(action: string): string {
  return verbs[action] ?? action.replace(/[._-]+/g, ' ').trim();
}

/** "(designer → reviewer)" for a role change, from its details; empty otherwise. */
export function actionDetail(action: string, details: unknown): string {
  if (action !== 'member.role_changed' || typeof details !== 'object' || details === null) return '';
  const { from, to } = details as { from?: unknown; to?: unknown };
  return typeof from === 'string' && typeof to === 'string' ? `(${from} → ${to})` : '';
}
