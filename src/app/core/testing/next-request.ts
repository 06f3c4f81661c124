import type { HttpTestingController, TestRequest } from '@angular/common/http/testing';

/**
 * Waits (a few macrotask turns) until a request to `url` is open, then returns it.
 * Guards and async handlers issue requests a turn or two after the action that
 * started them, so an immediate expectOne would race them.
 */
export async function nextRequest(mock: HttpTestingController, url: string, turns = 20): Promise<TestRequest> {
  for (let i = 0; i < turns; i++) {
    const [found] = mock.match((req) => req.urlWithParams === url || req.url === url);
    if (found) return found;
    await new Promise((resolve) => setTimeout(resolve));
  }
  throw new Error(`No request to ${url} was made.`);
}

/** Lets pending promises, timers of zero length and change detection run out. */
export async function settle(turns = 5): Promise<void> {
  for (let i = 0; i < turns; i++) await new Promise((resolve) => setTimeout(resolve));
}
