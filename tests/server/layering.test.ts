// Layering (issue 8, part 3): routes call services, services call repositories. A route
// file never queries the database, writes the audit log or imports a repository itself;
// the foundation features (groups, tokens, outbox, invitations, account) included.
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { projectRoot } from '../../server/config.js';

function files(dir: string, pattern: RegExp): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) return files(path, pattern);
    return pattern.test(name) ? [path] : [];
  });
}

/** What a route file may not do itself: query or write the database, the audit log, a repository. */
const reaches: [string, RegExp][] = [
  ['queries the database', /\b(db|tx|d\.db|deps\.db)\s*\.\s*(select|insert|update|delete|execute|transaction)\s*\(/],
  ['imports a repository', /from\s+'[^']*-repository\.js'/],
  ['writes the audit log', /\bwriteAudit\s*\(/],
  ['reads the activity log', /from\s+'[^']*audit\/activity\.js'/],
  ['builds SQL', /from\s+'drizzle-orm'/],
];

describe('routes call services', () => {
  const routes = files(join(projectRoot, 'server'), /-routes\.ts$/);

  it('finds the route files', () => {
    expect(routes.length).toBeGreaterThanOrEqual(12);
  });

  it('no route file reaches the database, the audit log or a repository', () => {
    const found = routes.flatMap((f) => {
      const text = readFileSync(f, 'utf8');
      return reaches.filter(([, re]) => re.test(text)).map(([what]) => `${relative(projectRoot, f)} ${what}`);
    });
    expect(found).toEqual([]);
  });
});
