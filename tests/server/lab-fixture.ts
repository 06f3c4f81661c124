// A fresh research group per test with one member per requested role, so tests never
// depend on each other's changes to shared rows.
import { randomUUID } from 'node:crypto';
import { hashPassword } from '../../server/auth/password.js';
import type { Db } from '../../server/db/client.js';
import { memberships, researchGroups, type MembershipRole } from '../../server/db/schema/groups.js';
import { users } from '../../server/db/schema/users.js';
import { testPasswordCost } from './test-app.js';

export const fixturePassword = 'fixture-password-1';

export interface LabUser {
  id: string;
  email: string;
  name: string;
  role: MembershipRole;
}

export interface Lab {
  groupId: string;
  name: string;
  /** Members in the order of the requested roles. */
  members: LabUser[];
  /** The first member with this role. */
  as(role: MembershipRole): LabUser;
}

let hash: Promise<string> | undefined;

export async function createLab(db: Db, roles: MembershipRole[]): Promise<Lab> {
  hash ??= hashPassword(fixturePassword, testPasswordCost);
  const passwordHash = await hash;
  const tag = randomUUID().slice(0, 8);
  const name = `Fixture Lab ${tag}`;
  const [group] = await db
    .insert(researchGroups)
    .values({ name, slug: `fixture-${tag}` })
    .returning();
  const members: LabUser[] = [];
  for (const [i, role] of roles.entries()) {
    const email = `${role}${i}.${tag}@fixture.example`;
    const userName = `${role[0]!.toUpperCase()}${role.slice(1)} ${i} ${tag}`;
    const [user] = await db.insert(users).values({ email, name: userName, passwordHash }).returning();
    await db.insert(memberships).values({ groupId: group!.id, userId: user!.id, role });
    members.push({ id: user!.id, email, name: userName, role });
  }
  return {
    groupId: group!.id,
    name,
    members,
    as(role) {
      const m = members.find((x) => x.role === role);
      if (!m) throw new Error(`Fixture lab has no ${role}`);
      return m;
    },
  };
}
