import { relations } from 'drizzle-orm';
import { auditLog } from './schema/audit.js';
import { apiTokens, passwordResetTokens } from './schema/credentials.js';
import { memberships, researchGroups } from './schema/groups.js';
import { invitations } from './schema/invitations.js';
import { users } from './schema/users.js';

export const usersRelations = relations(users, ({ many }) => ({
  memberships: many(memberships),
  apiTokens: many(apiTokens),
  passwordResetTokens: many(passwordResetTokens),
}));

export const researchGroupsRelations = relations(researchGroups, ({ many }) => ({
  memberships: many(memberships),
  invitations: many(invitations),
  auditLog: many(auditLog),
}));

export const membershipsRelations = relations(memberships, ({ one }) => ({
  group: one(researchGroups, { fields: [memberships.groupId], references: [researchGroups.id] }),
  user: one(users, { fields: [memberships.userId], references: [users.id] }),
}));

export const invitationsRelations = relations(invitations, ({ one }) => ({
  group: one(researchGroups, { fields: [invitations.groupId], references: [researchGroups.id] }),
  inviter: one(users, { fields: [invitations.invitedBy], references: [users.id] }),
}));

export const apiTokensRelations = relations(apiTokens, ({ one }) => ({
  user: one(users, { fields: [apiTokens.userId], references: [users.id] }),
}));

export const passwordResetTokensRelations = relations(passwordResetTokens, ({ one }) => ({
  user: one(users, { fields: [passwordResetTokens.userId], references: [users.id] }),
}));

export const auditLogRelations = relations(auditLog, ({ one }) => ({
  group: one(researchGroups, { fields: [auditLog.groupId], references: [researchGroups.id] }),
  actor: one(users, { fields: [auditLog.actorId], references: [users.id] }),
}));
