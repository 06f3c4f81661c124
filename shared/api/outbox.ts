/** The local mail stand-in's received mail, for the site operator. */
import * as z from 'zod';
import { timestamp } from './fields.js';
import { declareRoute, json } from './route.js';

export const outboxSummarySchema = z.object({ id: z.uuid(), to: z.string(), subject: z.string(), receivedAt: timestamp() }).meta({ id: 'OutboxSummary' });
export type OutboxSummary = z.infer<typeof outboxSummarySchema>;

export const outboxMessageSchema = z
  .object({ id: z.uuid(), to: z.string(), subject: z.string(), text: z.string(), html: z.string().optional(), receivedAt: timestamp() })
  .meta({ id: 'OutboxMessage' });
export type OutboxMessage = z.infer<typeof outboxMessageSchema>;

export const messageParams = z.object({ id: z.uuid() });

export const listOutboxRoute = declareRoute({
  id: 'listOutbox',
  method: 'get',
  path: '/outbox',
  tag: 'outbox',
  summary: 'Latest 100 messages the local mail stand-in received (no bodies; recorded)',
  access: 'operator',
  answer: json(200, 'Messages, newest first', z.array(outboxSummarySchema)),
});

export const outboxMessageRoute = declareRoute({
  id: 'getOutboxMessage',
  method: 'get',
  path: '/outbox/{id}',
  tag: 'outbox',
  summary: 'One received message, with its body (each read recorded, and shown to the recipient)',
  access: 'operator',
  params: messageParams,
  answer: json(200, 'The message', outboxMessageSchema),
});
