/**
 * Turns an audit action code ("member.role_changed", "invitation-sent") into words
 * ("member role changed"). Codes are the server's; unknown ones still read plainly.
 */
export function actionLabel(action: string): string {
  return action.replace(/[._-]+/g, ' ').trim();
}
