// "Sign in as" for API tests: a supertest agent that keeps the session cookies, plus
// request builders that add the CSRF header the way the web client does.
import request from 'supertest';
import type { Session } from '../../server/auth/session.js';
import type { TestApp } from './test-app.js';
import { fixturePassword } from './lab-fixture.js';

export interface SignedIn {
  agent: ReturnType<typeof request.agent>;
  session: Session;
  csrf: string;
  get(url: string): request.Test;
  post(url: string, body?: object): request.Test;
  patch(url: string, body?: object): request.Test;
  delete(url: string): request.Test;
}

export async function signInAs(app: TestApp, email: string, password = fixturePassword): Promise<SignedIn> {
  const agent = request.agent(app.server);
  const res = await agent.post('/api/auth/sign-in').send({ email, password });
  if (res.status !== 200) throw new Error(`sign-in as ${email} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return wrapAgent(agent, res.body as Session);
}

/** Wraps an agent that already holds cookies (e.g. after accepting an invitation). */
export function wrapAgent(agent: ReturnType<typeof request.agent>, session: Session): SignedIn {
  const csrf = session.csrfToken;
  return {
    agent,
    session,
    csrf,
    get: (url) => agent.get(url),
    post: (url, body) =>
      agent
        .post(url)
        .set('X-CSRF-Token', csrf)
        .send(body ?? {}),
    patch: (url, body) =>
      agent
        .patch(url)
        .set('X-CSRF-Token', csrf)
        .send(body ?? {}),
    delete: (url) => agent.delete(url).set('X-CSRF-Token', csrf),
  };
}
