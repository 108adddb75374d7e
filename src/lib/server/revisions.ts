/**
 * Revisions: immutable, numbered snapshots of a controller. A save names its base revision;
 * a save whose base is not the head is refused with 409 (carrying the head number) and stores
 * nothing, so concurrent edits are never lost silently.
 */
import { and, desc, eq, sql } from 'drizzle-orm';
import { z } from 'zod';
import { analyzeTable } from '../engine/analyze';
import { FlowTableError, tableToInterchange, type EngineIssue, type FlowTable } from '../engine/model';
import { parseSource, type SourceFormat } from '../engine/formats';
import { tableToText } from '../engine/formats/text';
import { recordAudit } from './audit';
import type { Db } from './db';
import { ApiError, fail } from './errors';
import { bumpDownloadCache } from './download-cache';
import { newId } from './ids';
import { supersedePendingReviews } from './review-states';
import { controllers, revisions, users, type FindingsSummary, type RevisionRow } from './schema';

/** Largest source accepted for a revision or an upload, in bytes (the engine's own cap). */
export const MAX_UPLOAD_BYTES = 2 * 1024 * 1024;

/** 409 for a save on a stale base: `head` is the controller's newest revision number. */
export class StaleBaseError extends ApiError {
  readonly head: number;
  readonly base: number;
  constructor(base: number, head: number) {
    super(409, 'stale_base', `This controller moved on: you edited r${base === 0 ? '0 (none)' : base}, but the newest revision is r${head}. Nothing was saved.`, {
      field: 'base',
      headers: { 'X-Quiesce-Head': String(head) },
      details: { head, base },
    });
    this.name = 'StaleBaseError';
    this.head = head;
    this.base = base;
  }
}

/** 400 for a source that does not parse: every located issue is kept for the UI. */
export class SourceError extends ApiError {
  readonly issues: EngineIssue[];
  constructor(issues: EngineIssue[], prefix = '') {
    const first = issues[0];
    super(400, 'invalid_source', `${prefix}${first ? `${first.where}: ${first.message}${first.hint ? ` (${first.hint})` : ''}` : 'the source is not valid'}${issues.length > 1 ? ` (+${issues.length - 1} more)` : ''}`, { field: 'source', details: { issues: issues.slice(0, 50) } });
    this.name = 'SourceError';
    this.issues = issues;
  }
}

/** Parses a source in any supported format; a FlowTableError becomes a located 400. */
export function parseOrFail(text: string, format: SourceFormat = 'text', name?: string): FlowTable {
  if (new TextEncoder().encode(text).length > MAX_UPLOAD_BYTES) throw fail.tooLarge(`The source is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MiB.`);
  try {
    return parseSource(text, format, name !== undefined ? { name } : {});
  } catch (e) {
    if (e instanceof FlowTableError) throw new SourceError(e.issues);
    throw e;
  }
}

/** What a revision stores besides its number: canonical text, interchange JSON and findings counts. */
export function canonicalizeTable(t: FlowTable): { source: string; interchange: Record<string, unknown>; findings: FindingsSummary } {
  const a = analyzeTable(t);
  return {
    source: tableToText(t),
    interchange: tableToInterchange(t) as unknown as Record<string, unknown>,
    findings: { error: a.counts.error, warning: a.counts.warning, info: a.counts.info },
  };
}

/** Input of createRevision. */
export interface CreateRevisionInput {
  controllerId: string;
  /** The revision the edit started from; 0 (or null) when the controller has none yet. */
  baseNumber: number | null;
  /** Source text in `format` (default: our `.qfl` text). */
  source: string;
  format?: SourceFormat;
  message: string;
  /** User id of the author. */
  author: string | null;
  /** Workspace id, for the audit entry. */
  workspaceId?: string;
}

/**
 * Parses and canonicalizes the source, then stores it as the next revision, atomically with
 * the controller's head. Throws SourceError (400) or StaleBaseError (409); stores nothing then.
 */
export async function createRevision(db: Db, input: CreateRevisionInput): Promise<RevisionRow> {
  const table = parseOrFail(input.source, input.format ?? 'text');
  return createRevisionFromTable(db, { ...input, table });
}

/** createRevision for an already parsed table (uploads, starters, reductions). */
export async function createRevisionFromTable(db: Db, input: Omit<CreateRevisionInput, 'source' | 'format'> & { table: FlowTable }): Promise<RevisionRow> {
  const canon = canonicalizeTable(input.table);
  const base = input.baseNumber ?? 0;
  if (input.message.length > 2000) throw fail.badRequest('A message is at most 2000 characters.', 'message');
  const row = await db.transaction(async (tx) => {
    const [c] = await tx
      .select({ id: controllers.id, head: controllers.headRevision, workspaceId: controllers.workspaceId, slug: controllers.slug })
      .from(controllers)
      .where(eq(controllers.id, input.controllerId))
      .for('update');
    if (!c) throw fail.notFound('Controller');
    if (c.head !== base) throw new StaleBaseError(base, c.head);
    const number = c.head + 1;
    const [inserted] = await tx
      .insert(revisions)
      .values({
        id: newId(),
        controllerId: c.id,
        number,
        baseNumber: base >= 1 ? base : null,
        authorId: input.author,
        message: input.message,
        source: canon.source,
        interchange: canon.interchange,
        findings: canon.findings,
      })
      .returning();
    await tx.update(controllers).set({ headRevision: number, updatedAt: sql`now()` }).where(eq(controllers.id, c.id));
    // A newer revision supersedes the pending reviews of older ones (issue 6).
    const superseded = await supersedePendingReviews(tx as unknown as Db, c.id, number);
    await recordAudit(tx as unknown as Db, {
      workspaceId: input.workspaceId ?? c.workspaceId,
      actorUserId: input.author,
      action: 'revision.created',
      target: `${c.slug}@r${number}`,
      detail: { base, findings: canon.findings, ...(superseded > 0 ? { supersededReviews: superseded } : {}) },
    });
    return inserted!;
  });
  await bumpDownloadCache(db); // `latest` now names the new revision
  return row;
}

/** A revision with its author's display name. */
export type RevisionWithAuthor = RevisionRow & { authorName: string | null };

/** A revision without its texts, as the history and both sides of a comparison show it. */
export const revisionSummarySchema = z.object({
  number: z.number().int(),
  base: z.number().int().nullable(),
  message: z.string(),
  author: z.string().nullable(),
  createdAt: z.string(),
  findings: z.object({ error: z.number().int(), warning: z.number().int(), info: z.number().int() }),
});

/** A revision without its texts, as the history and both sides of a comparison show it. */
export type RevisionSummary = z.infer<typeof revisionSummarySchema>;

/** The summary of a revision (a full row or a row of listRevisions). */
export function revisionToSummary(r: Pick<RevisionWithAuthor, 'number' | 'baseNumber' | 'message' | 'authorName' | 'createdAt' | 'findings'>): RevisionSummary {
  return { number: r.number, base: r.baseNumber, message: r.message, author: r.authorName ?? null, createdAt: r.createdAt.toISOString(), findings: r.findings };
}

/** One revision of a controller by number, or null. */
export async function getRevision(db: Db, controllerId: string, number: number): Promise<RevisionWithAuthor | null> {
  const [row] = await db
    .select({ revision: revisions, authorName: users.displayName })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(and(eq(revisions.controllerId, controllerId), eq(revisions.number, number)));
  return row ? { ...row.revision, authorName: row.authorName ?? null } : null;
}

/** The newest revision of a controller, or null when it has none. */
export async function getHeadRevision(db: Db, controllerId: string): Promise<RevisionWithAuthor | null> {
  const [row] = await db
    .select({ revision: revisions, authorName: users.displayName })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(eq(revisions.controllerId, controllerId))
    .orderBy(desc(revisions.number))
    .limit(1);
  return row ? { ...row.revision, authorName: row.authorName ?? null } : null;
}

/** Every revision of a controller, newest first, without the stored texts. */
export async function listRevisions(db: Db, controllerId: string) {
  return db
    .select({
      id: revisions.id,
      number: revisions.number,
      baseNumber: revisions.baseNumber,
      message: revisions.message,
      findings: revisions.findings,
      createdAt: revisions.createdAt,
      authorName: users.displayName,
    })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(eq(revisions.controllerId, controllerId))
    .orderBy(desc(revisions.number));
}
