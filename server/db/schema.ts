/**
 * The Drizzle schema: the single source of the database's shape. Migrations in drizzle/ are
 * generated from it (`npm run db:generate`) and committed.
 */
import { sql } from 'drizzle-orm';
import { bigserial, index, inet, json, jsonb, pgTable, primaryKey, text, timestamp, uuid, varchar } from 'drizzle-orm/pg-core';

/** People who have signed in through the identity provider; roles are re-read at each sign-in. */
export const users = pgTable('users', {
  id: uuid('id').primaryKey().defaultRandom(),
  /** the identity provider's NameID for the person */
  externalId: text('external_id').notNull().unique(),
  name: text('name').notNull(),
  email: text('email').notNull(),
  roles: text('roles').array().notNull().default(sql`'{}'::text[]`),
  groups: text('groups').array().notNull().default(sql`'{}'::text[]`),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  lastSignInAt: timestamp('last_sign_in_at', { withTimezone: true }),
});

/**
 * The audit trail: append-only, one row per sign-in, failed sign-in, sign-out and write.
 * Each row's hash covers its content and the previous row's hash, so an edit behind the
 * application's back breaks the chain at that row.
 */
export const auditEvents = pgTable(
  'audit_events',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
    actorId: uuid('actor_id').references(() => users.id),
    actorLabel: text('actor_label').notNull(),
    action: text('action').notNull(),
    objectType: text('object_type'),
    objectId: text('object_id'),
    detail: jsonb('detail').notNull().default(sql`'{}'::jsonb`),
    requestId: text('request_id'),
    clientAddress: inet('client_address'),
    prevHash: text('prev_hash').notNull(),
    hash: text('hash').notNull().unique(),
  },
  (t) => [index('audit_events_at_idx').on(t.at), index('audit_events_action_idx').on(t.action)],
);

/** Identity-provider group -> Liftwise role; admins edit it in the Admin screen. A group may grant several roles. */
export const roleMappings = pgTable(
  'role_mappings',
  {
    group: text('group').notNull(),
    role: text('role').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.group, t.role] })],
);

/**
 * Sign-in requests sent to the identity provider and not yet answered: the response's
 * InResponseTo must name one of them. Kept in the database so that every server instance
 * agrees; a row is removed when its response is used, and ignored once older than the expiry.
 */
export const samlRequests = pgTable('saml_requests', {
  id: text('id').primaryKey(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

/** express-session rows (connect-pg-simple's layout: sid, sess, expire). */
export const sessions = pgTable(
  'session',
  {
    sid: varchar('sid').primaryKey(),
    sess: json('sess').notNull(),
    expire: timestamp('expire', { precision: 6 }).notNull(),
  },
  (t) => [index('IDX_session_expire').on(t.expire)],
);
