/**
 * Database schema (Drizzle, PostgreSQL dialect) shared by PGlite and PostgreSQL.
 * Migrations in drizzle/ are generated from this file with `npm run db:generate`.
 *
 * Conventions: primary keys are random text ids (`newId()` in ids.ts); times are
 * `timestamptz`; e-mail addresses are stored lower-cased; workspace resources
 * cascade away with their workspace; people are `set null` so history survives
 * the deletion of an account. Revisions, bundles and releases are immutable:
 * a trigger (migration 0001) refuses UPDATE on them.
 */
import { sql } from 'drizzle-orm';
import {
  bigint,
  check,
  customType,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  text,
  timestamp,
  uniqueIndex,
} from 'drizzle-orm/pg-core';

/** Raw bytes; PGlite returns Uint8Array and node-postgres Buffer, both normalised to Uint8Array. */
const bytea = customType<{ data: Uint8Array; driverData: Uint8Array }>({
  dataType() {
    return 'bytea';
  },
  toDriver(value) {
    return Buffer.from(value.buffer, value.byteOffset, value.byteLength);
  },
  fromDriver(value) {
    return value instanceof Uint8Array ? new Uint8Array(value.buffer, value.byteOffset, value.byteLength) : value;
  },
});

const createdAt = () => timestamp('created_at', { withTimezone: true, mode: 'date' }).notNull().defaultNow();
const at = (name: string) => timestamp(name, { withTimezone: true, mode: 'date' });

/** Workspace roles, most to least powerful. */
export const ROLES = ['owner', 'editor', 'reviewer', 'viewer'] as const;
/** A workspace role. */
export type Role = (typeof ROLES)[number];
/** Review states. */
export const REVIEW_STATES = ['pending', 'approved', 'changes_requested', 'superseded'] as const;
/** A review state. */
export type ReviewState = (typeof REVIEW_STATES)[number];
/** Code generation targets. */
export const TARGETS = ['c', 'rust'] as const;
/** A code generation target. */
export type Target = (typeof TARGETS)[number];
/** Purposes of single-use e-mail tokens. */
export const EMAIL_TOKEN_PURPOSES = ['verify', 'reset'] as const;
/** Purpose of an e-mail token. */
export type EmailTokenPurpose = (typeof EMAIL_TOKEN_PURPOSES)[number];

const inList = (column: string, values: readonly string[]) =>
  sql.raw(`${column} in (${values.map((v) => `'${v}'`).join(', ')})`);

// ---------------------------------------------------------------- accounts

/** People who can sign in. */
export const users = pgTable(
  'users',
  {
    id: text('id').primaryKey(),
    email: text('email').notNull(),
    passwordHash: text('password_hash').notNull(),
    displayName: text('display_name').notNull(),
    emailVerifiedAt: at('email_verified_at'),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('users_email_key').on(t.email),
    check('users_email_lower', sql`${t.email} = lower(${t.email})`),
  ],
);

/** Sign-in sessions (managed by session.ts only). */
export const sessions = pgTable(
  'sessions',
  {
    id: text('id').primaryKey(),
    userId: text('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    expiresAt: timestamp('expires_at', { withTimezone: true, mode: 'date' }).notNull(),
  },
  (t) => [index('sessions_user_idx').on(t.userId)],
);

/** Single-use e-mail links (verify address, reset password); only the SHA-256 of the token is stored. */
export const emailTokens = pgTable(
  'email_tokens',
  {
    id: text('id').primaryKey(),
    userId: text('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    purpose: text('purpose', { enum: EMAIL_TOKEN_PURPOSES }).notNull(),
    tokenHash: text('token_hash').notNull(),
    expiresAt: at('expires_at').notNull(),
    usedAt: at('used_at'),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('email_tokens_hash_key').on(t.tokenHash),
    index('email_tokens_user_idx').on(t.userId, t.purpose),
    check('email_tokens_purpose_check', inList('purpose', EMAIL_TOKEN_PURPOSES)),
  ],
);

// ---------------------------------------------------------------- workspaces

/** A team's space: members, controllers, keys. */
export const workspaces = pgTable(
  'workspaces',
  {
    id: text('id').primaryKey(),
    slug: text('slug').notNull(),
    name: text('name').notNull(),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
  },
  (t) => [uniqueIndex('workspaces_slug_key').on(t.slug)],
);

/** Who belongs to a workspace, with which role. */
export const memberships = pgTable(
  'memberships',
  {
    workspaceId: text('workspace_id')
      .notNull()
      .references(() => workspaces.id, { onDelete: 'cascade' }),
    userId: text('user_id')
      .notNull()
      .references(() => users.id, { onDelete: 'cascade' }),
    role: text('role', { enum: ROLES }).notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    primaryKey({ name: 'memberships_pkey', columns: [t.workspaceId, t.userId] }),
    index('memberships_user_idx').on(t.userId),
    check('memberships_role_check', inList('role', ROLES)),
  ],
);

/** Invitations by e-mail: expiring, single-use (accepted, declined or revoked once). */
export const invites = pgTable(
  'invites',
  {
    id: text('id').primaryKey(),
    workspaceId: text('workspace_id')
      .notNull()
      .references(() => workspaces.id, { onDelete: 'cascade' }),
    email: text('email').notNull(),
    role: text('role', { enum: ROLES }).notNull(),
    tokenHash: text('token_hash').notNull(),
    invitedBy: text('invited_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    expiresAt: at('expires_at').notNull(),
    acceptedAt: at('accepted_at'),
    acceptedBy: text('accepted_by').references(() => users.id, { onDelete: 'set null' }),
    declinedAt: at('declined_at'),
    revokedAt: at('revoked_at'),
  },
  (t) => [
    uniqueIndex('invites_token_hash_key').on(t.tokenHash),
    // At most one open invite per address and workspace; re-inviting revokes the old one first.
    uniqueIndex('invites_open_key')
      .on(t.workspaceId, t.email)
      .where(sql`accepted_at is null and declined_at is null and revoked_at is null`),
    index('invites_workspace_idx').on(t.workspaceId),
    check('invites_role_check', inList('role', ROLES)),
    check('invites_email_lower', sql`${t.email} = lower(${t.email})`),
  ],
);

// ---------------------------------------------------------------- controllers and revisions

/** A design (flow table + settings) in a workspace; its content lives in revisions. */
export const controllers = pgTable(
  'controllers',
  {
    id: text('id').primaryKey(),
    workspaceId: text('workspace_id')
      .notNull()
      .references(() => workspaces.id, { onDelete: 'cascade' }),
    slug: text('slug').notNull(),
    name: text('name').notNull(),
    description: text('description').notNull().default(''),
    /** Number of the newest revision; 0 while the controller has none. */
    headRevision: integer('head_revision').notNull().default(0),
    archivedAt: at('archived_at'),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    updatedAt: at('updated_at').notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('controllers_workspace_slug_key').on(t.workspaceId, t.slug),
    check('controllers_head_revision_check', sql`${t.headRevision} >= 0`),
  ],
);

/** Findings counts stored with each revision. */
export type FindingsSummary = { error: number; warning: number; info: number };

/**
 * An immutable snapshot of a controller, numbered r1, r2, … per controller.
 * `source` is the canonical .qfl text, `interchange` the JSON interchange
 * (format quiesce-flow-table v1, including settings and saved scenarios).
 */
export const revisions = pgTable(
  'revisions',
  {
    id: text('id').primaryKey(),
    controllerId: text('controller_id')
      .notNull()
      .references(() => controllers.id, { onDelete: 'cascade' }),
    number: integer('number').notNull(),
    /** The revision this one was edited from; null for r1 (or an import). */
    baseNumber: integer('base_number'),
    authorId: text('author_id').references(() => users.id, { onDelete: 'set null' }),
    message: text('message').notNull().default(''),
    source: text('source').notNull(),
    interchange: jsonb('interchange').$type<Record<string, unknown>>().notNull(),
    findings: jsonb('findings').$type<FindingsSummary>().notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('revisions_controller_number_key').on(t.controllerId, t.number),
    check('revisions_number_check', sql`${t.number} >= 1`),
    check('revisions_base_check', sql`${t.baseNumber} is null or (${t.baseNumber} >= 1 and ${t.baseNumber} < ${t.number})`),
  ],
);

/** A generated zip for one revision, target and generator version; bytes are served as stored. */
export const bundles = pgTable(
  'bundles',
  {
    id: text('id').primaryKey(),
    revisionId: text('revision_id')
      .notNull()
      .references(() => revisions.id, { onDelete: 'cascade' }),
    target: text('target', { enum: TARGETS }).notNull(),
    generatorVersion: text('generator_version').notNull(),
    sha256: text('sha256').notNull(),
    size: integer('size').notNull(),
    bytes: bytea('bytes').notNull(),
    createdAt: createdAt(),
  },
  (t) => [
    uniqueIndex('bundles_revision_target_version_key').on(t.revisionId, t.target, t.generatorVersion),
    index('bundles_sha256_idx').on(t.sha256),
    check('bundles_target_check', inList('target', TARGETS)),
  ],
);

// ---------------------------------------------------------------- review and release

/** A request that one reviewer approve one revision. */
export const reviews = pgTable(
  'reviews',
  {
    id: text('id').primaryKey(),
    revisionId: text('revision_id')
      .notNull()
      .references(() => revisions.id, { onDelete: 'cascade' }),
    requestedBy: text('requested_by').references(() => users.id, { onDelete: 'set null' }),
    reviewerId: text('reviewer_id').references(() => users.id, { onDelete: 'set null' }),
    state: text('state', { enum: REVIEW_STATES }).notNull().default('pending'),
    createdAt: createdAt(),
    decidedAt: at('decided_at'),
  },
  (t) => [
    index('reviews_revision_idx').on(t.revisionId),
    index('reviews_reviewer_idx').on(t.reviewerId, t.state),
    check('reviews_state_check', inList('state', REVIEW_STATES)),
  ],
);

/** A comment on a revision (optionally within a review, optionally pinned to one cell). */
export const reviewComments = pgTable(
  'review_comments',
  {
    id: text('id').primaryKey(),
    revisionId: text('revision_id')
      .notNull()
      .references(() => revisions.id, { onDelete: 'cascade' }),
    reviewId: text('review_id').references(() => reviews.id, { onDelete: 'cascade' }),
    authorId: text('author_id').references(() => users.id, { onDelete: 'set null' }),
    body: text('body').notNull(),
    /** Cell the comment is about: state name and column key, both null for the whole revision. */
    cellState: text('cell_state'),
    cellInputs: text('cell_inputs'),
    createdAt: createdAt(),
  },
  (t) => [
    index('review_comments_revision_idx').on(t.revisionId),
    check('review_comments_cell_check', sql`(${t.cellState} is null) = (${t.cellInputs} is null)`),
  ],
);

/** A published, approved revision with a version label unique per controller. */
export const releases = pgTable(
  'releases',
  {
    id: text('id').primaryKey(),
    controllerId: text('controller_id')
      .notNull()
      .references(() => controllers.id, { onDelete: 'cascade' }),
    revisionId: text('revision_id')
      .notNull()
      .references(() => revisions.id, { onDelete: 'cascade' }),
    label: text('label').notNull(),
    notes: text('notes').notNull().default(''),
    publishedBy: text('published_by').references(() => users.id, { onDelete: 'set null' }),
    publishedAt: at('published_at').notNull().defaultNow(),
  },
  (t) => [
    uniqueIndex('releases_controller_label_key').on(t.controllerId, t.label),
    index('releases_revision_idx').on(t.revisionId),
  ],
);

/** Read-only bearer keys for CI downloads, scoped to a workspace (optionally some controllers). */
export const ciKeys = pgTable(
  'ci_keys',
  {
    id: text('id').primaryKey(),
    workspaceId: text('workspace_id')
      .notNull()
      .references(() => workspaces.id, { onDelete: 'cascade' }),
    name: text('name').notNull(),
    /** SHA-256 (hex) of the full key; the key itself is shown once and never stored. */
    keyHash: text('key_hash').notNull(),
    /** First characters of the key, shown in lists so people can tell keys apart. */
    prefix: text('prefix').notNull(),
    /** Controller ids the key may read; null means every controller of the workspace. */
    controllerIds: text('controller_ids').array(),
    createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
    createdAt: createdAt(),
    lastUsedAt: at('last_used_at'),
    revokedAt: at('revoked_at'),
  },
  (t) => [uniqueIndex('ci_keys_hash_key').on(t.keyHash), index('ci_keys_workspace_idx').on(t.workspaceId)],
);

// ---------------------------------------------------------------- audit and mail

/** Who did what, when. Written through recordAudit() in audit.ts only. */
export const auditLog = pgTable(
  'audit_log',
  {
    id: bigint('id', { mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
    workspaceId: text('workspace_id').references(() => workspaces.id, { onDelete: 'cascade' }),
    actorUserId: text('actor_user_id').references(() => users.id, { onDelete: 'set null' }),
    actorKeyId: text('actor_key_id').references(() => ciKeys.id, { onDelete: 'set null' }),
    /** Dotted verb, e.g. `auth.sign-in`, `member.role-changed`, `revision.created`. */
    action: text('action').notNull(),
    /** What was acted on, e.g. `user:ab12…`, `controller:door-interlock`, `r3`. */
    target: text('target').notNull().default(''),
    detail: jsonb('detail').$type<Record<string, unknown>>().notNull().default({}),
    at: at('at').notNull().defaultNow(),
  },
  (t) => [index('audit_log_workspace_at_idx').on(t.workspaceId, t.at), index('audit_log_actor_idx').on(t.actorUserId)],
);

/** Every message the app sent (or captured in demo mode), newest last. */
export const outbox = pgTable(
  'outbox',
  {
    id: bigint('id', { mode: 'number' }).primaryKey().generatedAlwaysAsIdentity(),
    to: text('to_address').notNull(),
    from: text('from_address').notNull(),
    subject: text('subject').notNull(),
    text: text('text_body').notNull(),
    html: text('html_body').notNull(),
    messageId: text('message_id'),
    at: at('at').notNull().defaultNow(),
  },
  (t) => [index('outbox_to_idx').on(t.to)],
);

/** A row of a table, as selected. */
export type UserRow = typeof users.$inferSelect;
/** A workspace row. */
export type WorkspaceRow = typeof workspaces.$inferSelect;
/** A membership row. */
export type MembershipRow = typeof memberships.$inferSelect;
/** An invite row. */
export type InviteRow = typeof invites.$inferSelect;
/** A controller row. */
export type ControllerRow = typeof controllers.$inferSelect;
/** A revision row. */
export type RevisionRow = typeof revisions.$inferSelect;
/** A bundle row. */
export type BundleRow = typeof bundles.$inferSelect;
/** A review row. */
export type ReviewRow = typeof reviews.$inferSelect;
/** A review comment row. */
export type ReviewCommentRow = typeof reviewComments.$inferSelect;
/** A release row. */
export type ReleaseRow = typeof releases.$inferSelect;
/** A CI key row. */
export type CiKeyRow = typeof ciKeys.$inferSelect;
/** An audit log row. */
export type AuditRow = typeof auditLog.$inferSelect;
/** An outbox row. */
export type OutboxRow = typeof outbox.$inferSelect;
