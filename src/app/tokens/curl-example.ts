/**
 * The example shown under a new token: list the user's groups with it. Single quotes
 * keep the shell from touching the token.
 */
export function curlExample(origin: string, token: string): string {
  return `curl -H 'Authorization: Bearer ${token}' ${origin}/api/groups`;
}
