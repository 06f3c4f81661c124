/** Escapes text for HTML e-mail bodies (names and group names are user-typed). */
export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}
