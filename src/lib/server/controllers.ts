/**
 * Controllers in a workspace: list (with head revision, findings counts, last release, who
 * changed it and when), create (blank, from our starter, or by upload), rename, archive,
 * and export of any revision in any format.
 */
import { and, desc, eq, inArray, isNull, sql } from 'drizzle-orm';
import { createTable, interchangeToTable, type FlowTable } from '../engine/model';
import { exportTable, type SourceFormat } from '../engine/formats';
import { recordAudit } from './audit';
import type { Db } from './db';
import { fail } from './errors';
import { newId } from './ids';
import { createRevisionFromTable, getHeadRevision, getRevision, parseOrFail } from './revisions';
import { controllers, releases, revisions, users, type ControllerRow, type FindingsSummary } from './schema';

/** How a new controller starts. */
export const CREATE_KINDS = ['blank', 'starter', 'upload'] as const;

/** One row of the workbench's controller list. */
export interface ControllerSummary {
  id: string;
  slug: string;
  name: string;
  description: string;
  head: number;
  findings: FindingsSummary | null;
  lastRelease: { label: string; revision: number; publishedAt: string } | null;
  changedBy: string | null;
  changedAt: string;
  archived: boolean;
}

/** Turns a display name into a URL slug (lowercase letters, digits and -). */
export function nameToSlug(name: string): string {
  const s = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 48)
    .replace(/-+$/g, '');
  return s || 'controller';
}

/** A table name (model rules) derived from a display name: snake_case ASCII. */
export function nameToTableName(name: string): string {
  const s = nameToSlug(name).replace(/-/g, '_');
  return /^[a-z]/.test(s) ? s : `c_${s}`;
}

/** Our starter: a guard interlock for a machine with a start button (two inputs, one output). */
export function createStarterTable(name: string): FlowTable {
  // Invented example: the motor may run only while the guard is closed and start was
  // pressed after the guard closed, so a start button taped down cannot restart the motor.
  return interchangeToTable({
    format: 'quiesce-flow-table',
    version: 1,
    name,
    description: 'Guard interlock: the motor runs while the guard is closed and start is held, but only if start was pressed after the guard closed.',
    inputs: ['guard_closed', 'start'],
    outputs: ['motor'],
    states: ['open', 'open_held', 'ready', 'run', 'blocked'],
    reset: 'open',
    rows: {
      open: { '00': 'open/0', '01': 'open_held/0', '11': 'blocked/0', '10': 'ready/0' },
      open_held: { '00': 'open/0', '01': 'open_held/0', '11': 'blocked/0', '10': 'ready/0' },
      ready: { '00': 'open/0', '01': 'open_held/0', '11': 'run/-', '10': 'ready/0' },
      run: { '00': 'open/0', '01': 'open_held/0', '11': 'run/1', '10': 'ready/-' },
      blocked: { '00': 'open/0', '01': 'open_held/0', '11': 'blocked/0', '10': 'ready/0' },
    },
    settings: { doubleChange: 'guarded' },
  });
}

/** A blank table: one input, one output, one state, every cell unspecified. */
export function createBlankTable(name: string): FlowTable {
  return createTable({ name, inputs: ['in1'], outputs: ['out1'], states: ['idle'] });
}

/** Lists a workspace's controllers with their head revision facts, newest change first. */
export async function summarizeControllers(db: Db, workspaceId: string, options: { includeArchived?: boolean } = {}): Promise<ControllerSummary[]> {
  const rows = await db
    .select({ c: controllers, findings: revisions.findings, authorName: users.displayName, revisedAt: revisions.createdAt })
    .from(controllers)
    .leftJoin(revisions, and(eq(revisions.controllerId, controllers.id), eq(revisions.number, controllers.headRevision)))
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(options.includeArchived ? eq(controllers.workspaceId, workspaceId) : and(eq(controllers.workspaceId, workspaceId), isNull(controllers.archivedAt)))
    .orderBy(desc(controllers.updatedAt));
  const ids = rows.map((r) => r.c.id);
  const rel = ids.length
    ? await db
        .select({ controllerId: releases.controllerId, label: releases.label, publishedAt: releases.publishedAt, number: revisions.number })
        .from(releases)
        .innerJoin(revisions, eq(revisions.id, releases.revisionId))
        .where(inArray(releases.controllerId, ids))
        .orderBy(desc(releases.publishedAt))
    : [];
  const lastRelease = new Map<string, (typeof rel)[number]>();
  for (const r of rel) if (!lastRelease.has(r.controllerId)) lastRelease.set(r.controllerId, r);
  return rows.map((r) => {
    const lr = lastRelease.get(r.c.id);
    return {
      id: r.c.id,
      slug: r.c.slug,
      name: r.c.name,
      description: r.c.description,
      head: r.c.headRevision,
      findings: r.findings ?? null,
      lastRelease: lr ? { label: lr.label, revision: lr.number, publishedAt: lr.publishedAt.toISOString() } : null,
      changedBy: r.authorName ?? null,
      changedAt: (r.revisedAt ?? r.c.updatedAt).toISOString(),
      archived: r.c.archivedAt !== null,
    };
  });
}

/** A controller of a workspace by slug; 404 when there is none. */
export async function requireController(db: Db, workspaceId: string, slug: string): Promise<ControllerRow> {
  const [row] = await db
    .select()
    .from(controllers)
    .where(and(eq(controllers.workspaceId, workspaceId), eq(controllers.slug, slug)));
  if (!row) throw fail.notFound('Controller');
  return row;
}

async function freeSlug(db: Db, workspaceId: string, base: string): Promise<string> {
  const taken = new Set(
    (
      await db
        .select({ slug: controllers.slug })
        .from(controllers)
        .where(and(eq(controllers.workspaceId, workspaceId), sql`${controllers.slug} like ${`${base}%`}`))
    ).map((r) => r.slug),
  );
  if (!taken.has(base)) return base;
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`;
}

/** Input of createController. */
export interface CreateControllerInput {
  workspaceId: string;
  name: string;
  author: string;
  kind: (typeof CREATE_KINDS)[number];
  /** For uploads: the file's text, its format and name. */
  upload?: { text: string; format: SourceFormat; filename: string };
  description?: string;
}

/** Creates a controller and its first revision r1; returns the controller row. */
export async function createController(db: Db, input: CreateControllerInput): Promise<ControllerRow> {
  const name = input.name.trim();
  if (name.length < 1 || name.length > 80) throw fail.badRequest('A controller name is 1 to 80 characters.', 'name');
  const tableName = nameToTableName(name);
  let table: FlowTable;
  if (input.kind === 'upload') {
    if (!input.upload) throw fail.badRequest('Choose a file to upload.', 'upload');
    table = parseOrFail(input.upload.text, input.upload.format, tableName);
  } else table = input.kind === 'starter' ? createStarterTable(tableName) : createBlankTable(tableName);
  const slug = await freeSlug(db, input.workspaceId, nameToSlug(name));
  const id = newId();
  await db.insert(controllers).values({ id, workspaceId: input.workspaceId, slug, name, description: input.description ?? table.description ?? '', createdBy: input.author });
  await recordAudit(db, {
    workspaceId: input.workspaceId,
    actorUserId: input.author,
    action: 'controller.created',
    target: `controller:${slug}`,
    detail: { kind: input.kind, ...(input.upload ? { file: input.upload.filename, format: input.upload.format } : {}) },
  });
  const message = input.kind === 'upload' ? `Imported ${input.upload!.filename}` : input.kind === 'starter' ? 'Started from the guard interlock starter' : 'Blank table';
  await createRevisionFromTable(db, { controllerId: id, baseNumber: 0, table, message, author: input.author, workspaceId: input.workspaceId });
  return requireController(db, input.workspaceId, slug);
}

/** Renames a controller (the slug, and so its URLs, stay). */
export async function renameController(db: Db, c: ControllerRow, name: string, actor: string): Promise<ControllerRow> {
  const n = name.trim();
  if (n.length < 1 || n.length > 80) throw fail.badRequest('A controller name is 1 to 80 characters.', 'name');
  const [row] = await db.update(controllers).set({ name: n, updatedAt: sql`now()` }).where(eq(controllers.id, c.id)).returning();
  await recordAudit(db, { workspaceId: c.workspaceId, actorUserId: actor, action: 'controller.renamed', target: `controller:${c.slug}`, detail: { from: c.name, to: n } });
  return row!;
}

/** Archives or restores a controller; archived ones leave the default list but keep their history. */
export async function setControllerArchived(db: Db, c: ControllerRow, archived: boolean, actor: string): Promise<ControllerRow> {
  const [row] = await db
    .update(controllers)
    .set({ archivedAt: archived ? sql`now()` : null, updatedAt: sql`now()` })
    .where(eq(controllers.id, c.id))
    .returning();
  await recordAudit(db, { workspaceId: c.workspaceId, actorUserId: actor, action: archived ? 'controller.archived' : 'controller.restored', target: `controller:${c.slug}` });
  return row!;
}

/** File extension and media type of each export format. */
export const EXPORT_TYPES: Record<SourceFormat, { ext: string; type: string }> = {
  text: { ext: 'qfl', type: 'text/plain; charset=utf-8' },
  json: { ext: 'json', type: 'application/json; charset=utf-8' },
  kiss2: { ext: 'kiss2', type: 'text/plain; charset=utf-8' },
  csv: { ext: 'csv', type: 'text/csv; charset=utf-8' },
};

/** The table of a revision (head when `number` is omitted); 404 when there is none. */
export async function loadRevisionTable(db: Db, c: ControllerRow, number?: number): Promise<{ table: FlowTable; number: number; source: string }> {
  const rev = number === undefined ? await getHeadRevision(db, c.id) : await getRevision(db, c.id, number);
  if (!rev) throw fail.notFound('Revision');
  return { table: interchangeToTable(rev.interchange), number: rev.number, source: rev.source };
}

/** Exports a revision in a format: body, filename and media type. */
export async function exportController(db: Db, c: ControllerRow, format: SourceFormat, number?: number): Promise<{ body: string; filename: string; type: string }> {
  const { table, number: n } = await loadRevisionTable(db, c, number);
  const t = EXPORT_TYPES[format];
  return { body: exportTable(table, format), filename: `${c.slug}-r${n}.${t.ext}`, type: t.type };
}
