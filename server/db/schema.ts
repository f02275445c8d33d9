/**
 * The Drizzle schema: the single source of the database's shape. Migrations in drizzle/ are
 * generated from it (`npm run db:generate`) and committed.
 */
import { sql } from 'drizzle-orm';
import {
  bigint,
  bigserial,
  boolean,
  date,
  doublePrecision,
  index,
  inet,
  integer,
  json,
  jsonb,
  pgEnum,
  pgTable,
  primaryKey,
  real,
  serial,
  text,
  timestamp,
  uniqueIndex,
  uuid,
  varchar,
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

// ---------------------------------------------------------------------------------------------
// Processing: per-member progress and diagnosis summaries
// ---------------------------------------------------------------------------------------------

export const memberState = pgEnum('member_state', ['waiting', 'diagnosing', 'deriving', 'done', 'failed']);

/** One row per ensemble member (or the one deterministic member) of a run: its own progress and failure. */
export const runMembers = pgTable(
  'run_members',
  {
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    member: integer('member').notNull(),
    state: memberState('state').notNull().default('waiting'),
    progress: real('progress').notNull().default(0),
    message: text('message'),
    attempts: integer('attempts').notNull().default(0),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [primaryKey({ columns: [t.runId, t.member] })],
);

/**
 * The QG diagnosis of one member (or -1 for the ensemble mean) at one valid time: solver
 * figures, sigma profile, omega statistics per level and, where the file carried the model's
 * omega, the pattern correlation per level. The omega fields themselves are Float32 files in the
 * storage folder (services/derived-store.ts).
 */
export const runDiagnostics = pgTable(
  'run_diagnostics',
  {
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    member: integer('member').notNull(),
    step: integer('step').notNull(),
    f0: doublePrecision('f0').notNull(),
    residual: doublePrecision('residual').notNull(),
    solveMs: real('solve_ms').notNull(),
    sigma: real('sigma').array().notNull(),
    omegaMin: real('omega_min').array().notNull(),
    omegaMean: real('omega_mean').array().notNull(),
    omegaMax: real('omega_max').array().notNull(),
    correlation: real('correlation').array(),
    warnings: text('warnings').array().notNull().default(sql`'{}'::text[]`),
  },
  (t) => [primaryKey({ columns: [t.runId, t.member, t.step] })],
);

// ---------------------------------------------------------------------------------------------
// Regions and calibration
// ---------------------------------------------------------------------------------------------

/** A hydro catchment or solar zone (GeoJSON feature of the regions contract, shared/regions.ts). */
export const regions = pgTable('regions', {
  id: text('id').primaryKey(),
  name: text('name').notNull(),
  kind: text('kind').notNull(),
  /** the feature's properties as uploaded (the contract's names) */
  properties: jsonb('properties').notNull(),
  geometry: jsonb('geometry').notNull(),
  areaKm2: doublePrecision('area_km2').notNull(),
  active: boolean('active').notNull().default(true),
  updatedBy: uuid('updated_by').references(() => users.id),
  updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
});

/** Versioned parameter sets (shared/calibration.ts). A version that has been used is never edited: a change makes a new version. */
export const calibrationSets = pgTable('calibration_sets', {
  version: serial('version').primaryKey(),
  name: text('name').notNull(),
  params: jsonb('params').notNull(),
  note: text('note'),
  basedOn: integer('based_on'),
  createdBy: uuid('created_by').references(() => users.id),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

/** Monthly precipitation climatology of a region, for anomalies in the scenario table (optional). */
export const regionClimatology = pgTable(
  'region_climatology',
  {
    regionId: text('region_id')
      .notNull()
      .references(() => regions.id, { onDelete: 'cascade' }),
    month: integer('month').notNull(),
    precipMmPerDay: real('precip_mm_per_day').notNull(),
  },
  (t) => [primaryKey({ columns: [t.regionId, t.month] })],
);

// ---------------------------------------------------------------------------------------------
// Signals: one row per run, member, region and UTC day (the scenario table's rows)
// ---------------------------------------------------------------------------------------------

export const signalRows = pgTable(
  'signal_rows',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    member: integer('member').notNull(),
    regionId: text('region_id')
      .notNull()
      .references(() => regions.id),
    day: date('day', { mode: 'string' }).notNull(),
    precipMm: real('precip_mm'),
    snowShare: real('snow_share'),
    cloudPct: real('cloud_pct'),
    ghiKwhM2: real('ghi_kwh_m2'),
    solarGwh: real('solar_gwh'),
    inflowGwh: real('inflow_gwh'),
    modelPrecipMm: real('model_precip_mm'),
    modelCloudPct: real('model_cloud_pct'),
    /** hours of the day the model steps covered (a partial first or last day says so) */
    hoursCovered: real('hours_covered').notNull().default(24),
    calibrationVersion: integer('calibration_version')
      .notNull()
      .references(() => calibrationSets.version),
    codeVersion: text('code_version').notNull(),
    inputChecksum: text('input_checksum').notNull(),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('signal_rows_key').on(t.runId, t.member, t.regionId, t.day),
    index('signal_rows_region_day_idx').on(t.regionId, t.day),
  ],
);

/** A trader's saved grid view: column state and filters. */
export const savedViews = pgTable('saved_views', {
  id: uuid('id').primaryKey().defaultRandom(),
  userId: uuid('user_id')
    .notNull()
    .references(() => users.id),
  name: text('name').notNull(),
  state: jsonb('state').notNull(),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

// ---------------------------------------------------------------------------------------------
// Regime calls: clusters, regime names, calls and their versions, subscribers
// ---------------------------------------------------------------------------------------------

/** A clustering of an ensemble run's members (EOF truncation + k-means, server/science/clusters.ts). */
export const runClusterings = pgTable(
  'run_clusterings',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    runId: uuid('run_id')
      .notNull()
      .references(() => runs.id, { onDelete: 'cascade' }),
    step: integer('step').notNull(),
    k: integer('k').notNull(),
    seed: integer('seed').notNull(),
    silhouette: real('silhouette').notNull(),
    explainedVariance: real('explained_variance').array().notNull(),
    /** [{ id, members: number[], size }] */
    clusters: jsonb('clusters').notNull(),
    /** per cluster, the mean 500 hPa geopotential field for its map */
    meanFields: jsonb('mean_fields').notNull(),
    createdBy: uuid('created_by').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (t) => [uniqueIndex('run_clusterings_key').on(t.runId, t.step, t.k, t.seed)],
);

/** The desk's own names for large-scale regimes, edited by admins. */
export const regimeNames = pgTable('regime_names', {
  id: serial('id').primaryKey(),
  name: text('name').notNull().unique(),
  description: text('description').notNull().default(''),
  active: boolean('active').notNull().default(true),
});

export const callState = pgEnum('call_state', ['draft', 'published']);

/**
 * A morning regime call. Every version is a row; `seriesId` ties the versions of one call
 * together, and a correction points at the version it replaces with a reason. A published row is
 * never changed (a trigger refuses it).
 */
export const regimeCalls = pgTable(
  'regime_calls',
  {
    id: uuid('id').primaryKey().defaultRandom(),
    seriesId: uuid('series_id').notNull(),
    version: integer('version').notNull(),
    state: callState('state').notNull().default('draft'),
    validFrom: date('valid_from', { mode: 'string' }).notNull(),
    validTo: date('valid_to', { mode: 'string' }).notNull(),
    /** [{ from, to, regimeId }] */
    regimes: jsonb('regimes').notNull(),
    confidence: text('confidence').notNull(),
    /** { basis: 'cluster' | 'member', clusteringId?, weights: [{ key, pct }] } summing to 100 */
    weights: jsonb('weights').notNull(),
    keyRisks: text('key_risks').notNull().default(''),
    narrative: text('narrative').notNull().default(''),
    linkedRunIds: uuid('linked_run_ids').array().notNull().default(sql`'{}'::uuid[]`),
    correctionOf: uuid('correction_of'),
    correctionReason: text('correction_reason'),
    authorId: uuid('author_id').references(() => users.id),
    createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
    publishedAt: timestamp('published_at', { withTimezone: true }),
  },
  (t) => [uniqueIndex('regime_calls_series_version').on(t.seriesId, t.version), index('regime_calls_published_idx').on(t.publishedAt)],
);

/** People who receive published calls by e-mail, with the regions each cares about. */
export const subscriptions = pgTable('subscriptions', {
  id: uuid('id').primaryKey().defaultRandom(),
  email: text('email').notNull().unique(),
  name: text('name').notNull(),
  regionIds: text('region_ids').array().notNull().default(sql`'{}'::text[]`),
  active: boolean('active').notNull().default(true),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
});

// ---------------------------------------------------------------------------------------------
// Snapshots and machine access
// ---------------------------------------------------------------------------------------------

/** Sealed snapshots (server/seal/): the sealed document as canonical JSON, chained by hash. Triggers refuse UPDATE and DELETE. */
export const snapshots = pgTable('snapshots', {
  id: bigserial('id', { mode: 'number' }).primaryKey(),
  sealedAt: timestamp('sealed_at', { withTimezone: true }).notNull(),
  sealedBy: uuid('sealed_by').references(() => users.id),
  sealedByLabel: text('sealed_by_label').notNull(),
  /** a short description of what was sealed (filters, call version) for the list */
  summary: jsonb('summary').notNull(),
  /** the canonical JSON text of the sealed document, byte for byte as signed */
  document: text('document').notNull(),
  hash: text('hash').notNull().unique(),
  previousHash: text('previous_hash'),
  keyId: text('key_id').notNull(),
});

/** Tokens for scheduled jobs (`liftwise upload --url`): only the SHA-256 of the token is stored. */
export const apiTokens = pgTable('api_tokens', {
  id: uuid('id').primaryKey().defaultRandom(),
  name: text('name').notNull(),
  tokenHash: text('token_hash').notNull().unique(),
  roles: text('roles').array().notNull(),
  createdBy: uuid('created_by').references(() => users.id),
  createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
  lastUsedAt: timestamp('last_used_at', { withTimezone: true }),
  revokedAt: timestamp('revoked_at', { withTimezone: true }),
});
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
