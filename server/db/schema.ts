/**
 * The Drizzle schema: the single source of the database's shape. Migrations in drizzle/ are
 * generated from it (`npm run db:generate`) and committed.
 */
import { sql } from 'drizzle-orm';
import {
  bigint,
  bigserial,
  boolean,
  index,
  inet,
  integer,
  jsonb,
  pgEnum,
  pgTable,
  real,
  text,
  timestamp,
  uuid,
} from 'drizzle-orm/pg-core';

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

/**
 * A run's life, in Liftwise's own words: received (stored, waiting), reading (decoding the file
 * into the canonical grid), diagnosing (QG omega per member and valid time), deriving (regional
 * signals and generation), ready; or rejected with a plain message.
 */
export const runState = pgEnum('run_state', ['received', 'reading', 'diagnosing', 'deriving', 'ready', 'rejected']);

export interface RunGrid {
  nlat: number;
  nlon: number;
  latFirst: number;
  latLast: number;
  lonFirst: number;
  lonLast: number;
  dlat: number;
  dlon: number;
}

/** One uploaded model-run file. The file itself lives in the storage folder under its SHA-256. */
export const runs = pgTable(
  'runs',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    checksum: text('checksum').notNull().unique(),
    sizeBytes: bigint('size_bytes', { mode: 'number' }).notNull(),
    /** the uploader's file name, for display only; never used in a path */
    fileName: text('file_name').notNull(),
    format: text('format'),
    model: text('model'),
    cycle: timestamp('cycle', { withTimezone: true }),
    members: integer('members').array(),
    isEnsemble: boolean('is_ensemble'),
    steps: integer('steps').array(),
    levelsHpa: real('levels_hpa').array(),
    variables: text('variables').array(),
    grid: jsonb('grid').$type<RunGrid>(),
    state: runState('state').notNull().default('received'),
    progress: real('progress').notNull().default(0),
    message: text('message'),
    uploadedBy: uuid('uploaded_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('runs_created_idx').on(t.createdAt), index('runs_model_cycle_idx').on(t.model, t.cycle)],
);

export const mailState = pgEnum('mail_state', ['pending', 'sent', 'failed']);

/**
 * The transactional outbox: a mail row is written in the same transaction as the action that
 * causes it (a published call), and a sender delivers it with retries, so a mail server that is
 * down loses nothing.
 */
export const outboxMails = pgTable(
  'outbox_mails',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    kind: text('kind').notNull(),
    relatedType: text('related_type'),
    relatedId: text('related_id'),
    recipients: text('recipients').array().notNull(),
    subject: text('subject').notNull(),
    textBody: text('text_body').notNull(),
    htmlBody: text('html_body'),
    state: mailState('state').notNull().default('pending'),
    attempts: integer('attempts').notNull().default(0),
    nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true }).notNull().defaultNow(),
    lastError: text('last_error'),
    sentAt: timestamp('sent_at', { withTimezone: true }),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [index('outbox_mails_due_idx').on(t.state, t.nextAttemptAt)],
);
