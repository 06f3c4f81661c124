/** Reads the `pw_csrf` cookie the server sets at sign-in (deliberately not httpOnly). */
export function readCsrfCookie(cookies: string): string | null {
  for (const part of cookies.split(';')) {
    const [name, ...rest] = part.trim().split('=');
    if (name === 'pw_csrf') return decodeURIComponent(rest.join('='));
  }
  return null;
}
