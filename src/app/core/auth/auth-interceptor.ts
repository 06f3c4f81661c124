import { DOCUMENT } from '@angular/common';
import { HttpErrorResponse, type HttpInterceptorFn } from '@angular/common/http';
import { inject } from '@angular/core';
import { Router } from '@angular/router';
import { catchError, throwError } from 'rxjs';
import { Auth } from './auth';
import { readCsrfCookie } from './csrf-cookie';

const unsafe = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/**
 * Sends the session cookie, adds the CSRF header the server demands on unsafe
 * methods, and sends the user to sign-in when the session has gone (401). The
 * auth endpoints themselves are left alone: a 401 there is an answer, not an expiry.
 */
export const authInterceptor: HttpInterceptorFn = (req, next) => {
  const auth = inject(Auth);
  const router = inject(Router);
  const document = inject(DOCUMENT);

  let outgoing = req.clone({ withCredentials: true });
  if (unsafe.has(req.method.toUpperCase()) && !req.headers.has('X-CSRF-Token')) {
    // The cookie is what the server compares with; the session copy covers a cookie jar we cannot read.
    const token = readCsrfCookie(document.cookie ?? '') ?? auth.csrfToken();
    if (token) outgoing = outgoing.clone({ setHeaders: { 'X-CSRF-Token': token } });
  }

  return next(outgoing).pipe(
    catchError((err: unknown) => {
      if (err instanceof HttpErrorResponse && err.status === 401 && !req.url.includes('/api/auth/')) {
        auth.forget();
        const returnUrl = router.url.startsWith('/sign-in') ? undefined : router.url;
        void router.navigate(['/sign-in'], { queryParams: returnUrl ? { returnUrl } : {} });
      }
      return throwError(() => err);
    }),
  );
};
