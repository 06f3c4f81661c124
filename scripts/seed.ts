// Demo data: two fictional labs so roles and cross-group isolation can be tried out.
//   tsx scripts/seed.ts   (uses DATABASE_URL or the default poleward database)
// Idempotent: groups are keyed by slug, users by e-mail, memberships by the pair; an
// existing user's password and role are left as they are.
import { fileURLToPath } from 'node:url';
import { eq } from 'drizzle-orm';
import { hashPassword } from '../server/auth/password.js';
import { ensureSiteOperator } from '../server/auth/site-operator.js';
import type { Db } from '../server/db/client.js';
import { memberships, researchGroups, type MembershipRole } from '../server/db/schema/groups.js';
import { users } from '../server/db/schema/users.js';

export const demoPassword = 'poleward-demo';

export const demoGroups = [
  { slug: 'harrow-lake', name: 'Harrow Lake Mesoscopics Lab' },
  { slug: 'quarry-hill', name: 'Quarry Hill Microwave Group' },
] as const;

export const demoAccounts: { email: string; name: string; group: (typeof demoGroups)[number]['slug']; role: MembershipRole }[] = [
  { email: 'ada.admin@harrow-lake.example', name: 'Ada Marlow', group: 'harrow-lake', role: 'admin' },
  { email: 'dev.designer@harrow-lake.example', name: 'Devi Okafor', group: 'harrow-lake', role: 'designer' },
  { email: 'rae.reviewer@harrow-lake.example', name: 'Rae Lindqvist', group: 'harrow-lake', role: 'reviewer' },
  { email: 'vic.viewer@harrow-lake.example', name: 'Victor Sandoval', group: 'harrow-lake', role: 'viewer' },
  { email: 'quinn.admin@quarry-hill.example', name: 'Quinn Adebayo', group: 'quarry-hill', role: 'admin' },
];

export interface SeedResult {
  groups: Record<string, string>;
  users: Record<string, string>;
}

/** Inserts what is missing and returns the ids by slug and by e-mail. `passwordCost` lets tests hash faster. */
export async function seedDemo(db: Db, opts: { passwordCost?: number } = {}): Promise<SeedResult> {
  const passwordHash = await hashPassword(demoPassword, opts.passwordCost);
  return db.transaction(async (tx) => {
    const groupIds: Record<string, string> = {};
    for (const g of demoGroups) {
      await tx.insert(researchGroups).values(g).onConflictDoNothing({ target: researchGroups.slug });
      const [row] = await tx.select({ id: researchGroups.id }).from(researchGroups).where(eqSlug(g.slug));
      groupIds[g.slug] = row!.id;
    }
    const userIds: Record<string, string> = {};
    for (const a of demoAccounts) {
      await tx.insert(users).values({ email: a.email, name: a.name, passwordHash }).onConflictDoNothing({ target: users.email });
      const [row] = await tx.select({ id: users.id }).from(users).where(eqEmail(a.email));
      userIds[a.email] = row!.id;
      await tx.insert(memberships).values({ groupId: groupIds[a.group]!, userId: row!.id, role: a.role }).onConflictDoNothing();
    }
    // The demo's first admin runs the local set-up: she alone reads the mail outbox.
    await ensureSiteOperator(tx, demoAccounts[0]!.email);
    return { groups: groupIds, users: userIds };
  });
}

const eqSlug = (slug: string) => eq(researchGroups.slug, slug);
const eqEmail = (email: string) => eq(users.email, email);

export function printDemoAccounts(): void {
  console.log(`[seed] demo accounts (password for all: ${demoPassword}):`);
  for (const a of demoAccounts) {
    const group = demoGroups.find((g) => g.slug === a.group)!.name;
    console.log(`  ${a.email.padEnd(36)} ${a.name.padEnd(16)} ${a.role.padEnd(9)} ${group}`);
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const { loadConfig } = await import('../server/config.js');
  const { connectDb } = await import('../server/db/client.js');
  const handle = connectDb(loadConfig().databaseUrl, 2);
  try {
    await seedDemo(handle.db);
    printDemoAccounts();
  } finally {
    await handle.close();
  }
}
