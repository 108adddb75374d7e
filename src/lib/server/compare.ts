/**
 * Compare any two revisions of a controller: the table diff (names added, removed and renamed;
 * changed cells), the findings diff (new, resolved, unchanged), a unified diff of the canonical
 * source, and a per-target, per-file diff of the generated code. The code diff reads the stored
 * bundles (generating them on first use), so reviewers read exactly the bytes CI downloads.
 */
import { createTwoFilesPatch, FILE_HEADERS_ONLY, structuredPatch } from 'diff';
import { z } from 'zod';
import { diffTables, type TableDiff } from '../engine/diff';
import { findingSchema } from '../engine/findings';
import { interchangeToTable, type FlowTable } from '../engine/model';
import { ensureBundle, readBundleFiles, type BundleMeta } from './bundles';
import type { Db } from './db';
import { fail } from './errors';
import { getRevision, revisionSummarySchema, revisionToSummary, type RevisionSummary, type RevisionWithAuthor } from './revisions';
import { TARGETS, type ControllerRow, type Target } from './schema';

/** Query of the compare endpoint: `to` (default: the head) against `from` (default: the base of `to`). */
export const compareQuerySchema = z
  .object({
    from: z.coerce.number().int().min(1).max(10_000_000).optional(),
    to: z.coerce.number().int().min(1).max(10_000_000).optional(),
    format: z.enum(['json', 'unified']).default('json'),
    /** Targets whose generated code is compared (default both); `none` skips the code diff. */
    targets: z
      .string()
      .regex(/^(?:none|(?:c|rust)(?:,(?:c|rust))*)$/, 'targets is a comma-separated list of c and rust, or none')
      .optional(),
  })
  .strict();

const nameChangesSchema = z.object({
  added: z.array(z.string()),
  removed: z.array(z.string()),
  renamed: z.array(z.object({ before: z.string(), after: z.string() })),
});

/** The table part of a comparison (the engine's diffTables result, findings listed separately). */
export const tableDiffSchema = z.object({
  same: z.boolean(),
  name: z.object({ before: z.string(), after: z.string() }).optional(),
  description: z.object({ before: z.string().nullable(), after: z.string().nullable() }).optional(),
  reset: z.object({ before: z.string(), after: z.string() }).optional(),
  settings: z.array(z.object({ key: z.string(), before: z.string().nullable(), after: z.string().nullable() })),
  states: nameChangesSchema,
  inputs: nameChangesSchema,
  outputs: nameChangesSchema,
  /** False when the two tables have different inputs, so their columns cannot be matched. */
  cellsCompared: z.boolean(),
  /** Changed cells, in the newer table's names; texts are `-`, `NEXT` or `NEXT/BITS`. */
  cells: z.array(z.object({ state: z.string(), inputs: z.string(), before: z.string(), after: z.string() })),
});

/** Status of one file between the two sides. */
export const FILE_STATUSES = ['added', 'removed', 'changed', 'unchanged'] as const;

/** One generated file in the comparison (JSON form: the patch, not both texts). */
export const fileDiffSchema = z.object({
  path: z.string(),
  status: z.enum(FILE_STATUSES),
  additions: z.number().int(),
  deletions: z.number().int(),
  /** Unified diff of the file (empty when unchanged). */
  patch: z.string(),
});

/** The generated code of one target on both sides. */
export const targetDiffSchema = z.object({
  target: z.enum(TARGETS),
  from: z.object({ sha256: z.string(), generatorVersion: z.string() }),
  to: z.object({ sha256: z.string(), generatorVersion: z.string() }),
  files: z.array(fileDiffSchema),
});

/** The JSON answer of the compare endpoint. */
export const comparisonSchema = z.object({
  controller: z.object({ slug: z.string(), name: z.string() }),
  from: revisionSummarySchema,
  to: revisionSummarySchema,
  table: tableDiffSchema,
  findings: z.object({ added: z.array(findingSchema), resolved: z.array(findingSchema), unchanged: z.array(findingSchema) }),
  source: z.object({ path: z.string(), additions: z.number().int(), deletions: z.number().int(), patch: z.string() }),
  code: z.array(targetDiffSchema),
});

/** The JSON answer of the compare endpoint. */
export type ComparisonJson = z.infer<typeof comparisonSchema>;

/** A generated file on both sides, with the texts (for the diff editor). */
export interface FileComparison extends z.infer<typeof fileDiffSchema> {
  before: string | null;
  after: string | null;
}

/** The generated code of one target on both sides, with texts. */
export interface TargetComparison {
  target: Target;
  from: Pick<BundleMeta, 'sha256' | 'generatorVersion'>;
  to: Pick<BundleMeta, 'sha256' | 'generatorVersion'>;
  files: FileComparison[];
}

/** A full comparison, as the compare page uses it (texts and tables included). */
export interface Comparison {
  controller: { slug: string; name: string };
  from: RevisionSummary;
  to: RevisionSummary;
  tables: { from: FlowTable; to: FlowTable };
  sources: { from: string; to: string };
  table: Omit<TableDiff, 'findings'>;
  findings: NonNullable<TableDiff['findings']>;
  source: z.infer<typeof comparisonSchema>['source'];
  code: TargetComparison[];
}

function countLines(patch: ReturnType<typeof structuredPatch>): { additions: number; deletions: number } {
  let additions = 0;
  let deletions = 0;
  for (const h of patch.hunks)
    for (const line of h.lines) {
      if (line.startsWith('+')) additions += 1;
      else if (line.startsWith('-')) deletions += 1;
    }
  return { additions, deletions };
}

/** A unified diff of two texts with `a/` and `b/` names (`/dev/null` for a missing side), as git prints it. */
export function textsToPatch(path: string, before: string | null, after: string | null, labels: { from: string; to: string }): { patch: string; additions: number; deletions: number } {
  if (before === after) return { patch: '', additions: 0, deletions: 0 };
  const oldName = before === null ? '/dev/null' : `a/${path}`;
  const newName = after === null ? '/dev/null' : `b/${path}`;
  const a = before ?? '';
  const b = after ?? '';
  const counts = countLines(structuredPatch(oldName, newName, a, b, labels.from, labels.to, { context: 3 }));
  const patch = createTwoFilesPatch(oldName, newName, a, b, labels.from, labels.to, { context: 3, headerOptions: FILE_HEADERS_ONLY });
  return { patch, ...counts };
}

/** Compares two lists of files by path. */
export function compareFiles(before: { path: string; content: string }[], after: { path: string; content: string }[], labels: { from: string; to: string }): FileComparison[] {
  const a = new Map(before.map((f) => [f.path, f.content] as const));
  const b = new Map(after.map((f) => [f.path, f.content] as const));
  const paths = [...new Set([...a.keys(), ...b.keys()])].sort();
  return paths.map((path) => {
    const x = a.get(path) ?? null;
    const y = b.get(path) ?? null;
    const status = x === null ? 'added' : y === null ? 'removed' : x === y ? 'unchanged' : 'changed';
    return { path, status, before: x, after: y, ...textsToPatch(path, x, y, labels) };
  });
}

/** The default `from` of a comparison: the base of `to`, else the revision before it; null for a lone r1. */
export function pickDefaultFrom(to: Pick<RevisionWithAuthor, 'number' | 'baseNumber'>): number | null {
  if (to.baseNumber !== null) return to.baseNumber;
  return to.number > 1 ? to.number - 1 : null;
}

/** Which targets a `targets` query names (default both). */
export function parseTargets(value: string | undefined): Target[] {
  if (value === undefined) return [...TARGETS];
  if (value === 'none') return [];
  return TARGETS.filter((t) => value.split(',').includes(t));
}

/**
 * Compares revision `toNumber` (default: head) of a controller against `fromNumber` (default:
 * its base). 404 when a revision does not exist; 400 when r1 has nothing to compare with.
 */
export async function compareRevisions(
  db: Db,
  controller: Pick<ControllerRow, 'id' | 'slug' | 'name' | 'headRevision'>,
  options: { from?: number | undefined; to?: number | undefined; targets?: Target[] | undefined } = {},
): Promise<Comparison> {
  const toNumber = options.to ?? controller.headRevision;
  const to = toNumber >= 1 ? await getRevision(db, controller.id, toNumber) : null;
  if (!to) throw fail.notFound('Revision');
  const fromNumber = options.from ?? pickDefaultFrom(to);
  if (fromNumber === null) throw fail.badRequest(`r${to.number} has no base revision to compare with; name one with from=N.`, 'from');
  const from = fromNumber === to.number ? to : await getRevision(db, controller.id, fromNumber);
  if (!from) throw fail.notFound('Revision');

  const tables = { from: interchangeToTable(from.interchange), to: interchangeToTable(to.interchange) };
  const { findings, ...table } = diffTables(tables.from, tables.to);
  const labels = { from: `r${from.number}`, to: `r${to.number}` };
  const sourcePath = `${controller.slug}.qfl`;
  const source = { path: sourcePath, ...textsToPatch(sourcePath, from.source, to.source, labels) };

  const code: TargetComparison[] = [];
  for (const target of options.targets ?? TARGETS) {
    const [bundleFrom, bundleTo] = [await ensureBundle(db, from, target), await ensureBundle(db, to, target)];
    const [filesFrom, filesTo] = [await readBundleFiles(db, bundleFrom), await readBundleFiles(db, bundleTo)];
    code.push({
      target,
      from: { sha256: bundleFrom.sha256, generatorVersion: bundleFrom.generatorVersion },
      to: { sha256: bundleTo.sha256, generatorVersion: bundleTo.generatorVersion },
      files: compareFiles(filesFrom, filesTo, { from: `${labels.from}/${target}`, to: `${labels.to}/${target}` }).map((f) => ({ ...f })),
    });
  }
  return {
    controller: { slug: controller.slug, name: controller.name },
    from: revisionToSummary(from),
    to: revisionToSummary(to),
    tables,
    sources: { from: from.source, to: to.source },
    table,
    findings: findings ?? { added: [], resolved: [], unchanged: [] },
    source,
    code,
  };
}

/** The JSON form of a comparison (patches instead of full texts). */
export function comparisonToJson(c: Comparison): ComparisonJson {
  return {
    controller: c.controller,
    from: c.from,
    to: c.to,
    table: c.table,
    findings: c.findings,
    source: c.source,
    code: c.code.map((t) => ({
      target: t.target,
      from: t.from,
      to: t.to,
      files: t.files.map(({ path, status, additions, deletions, patch }) => ({ path, status, additions, deletions, patch })),
    })),
  };
}

/**
 * The whole comparison as one unified diff (source first, then each target's files under
 * `c/` and `rust/`), preceded by a short summary in `#` lines that patch tools ignore.
 */
export function comparisonToUnified(c: Comparison): string {
  const out: string[] = [];
  const t = c.table;
  const names = (label: string, n: { added: string[]; removed: string[]; renamed: { before: string; after: string }[] }) => {
    const parts = [
      ...n.added.map((x) => `+${x}`),
      ...n.removed.map((x) => `-${x}`),
      ...n.renamed.map((r) => `${r.before}->${r.after}`),
    ];
    if (parts.length) out.push(`# ${label}: ${parts.join(' ')}`);
  };
  out.push(`# Quiesce compare ${c.controller.slug} r${c.from.number}..r${c.to.number}`);
  out.push(`# findings r${c.from.number}: ${c.from.findings.error} error, ${c.from.findings.warning} warning, ${c.from.findings.info} info; r${c.to.number}: ${c.to.findings.error} error, ${c.to.findings.warning} warning, ${c.to.findings.info} info`);
  names('states', t.states);
  names('inputs', t.inputs);
  names('outputs', t.outputs);
  if (t.cellsCompared) out.push(`# changed cells: ${t.cells.length}`);
  else out.push('# cells not compared: the inputs differ');
  for (const cell of t.cells.slice(0, 200)) out.push(`#   ${cell.state} @ ${cell.inputs}: ${cell.before} -> ${cell.after}`);
  if (t.cells.length > 200) out.push(`#   … ${t.cells.length - 200} more`);
  out.push(`# findings: ${c.findings.added.length} new, ${c.findings.resolved.length} resolved, ${c.findings.unchanged.length} unchanged`);
  for (const f of c.findings.added) out.push(`#   new ${f.severity} ${f.code}: ${f.message}`);
  for (const f of c.findings.resolved) out.push(`#   resolved ${f.severity} ${f.code}: ${f.message}`);
  for (const code of c.code) {
    const changed = code.files.filter((f) => f.status !== 'unchanged').length;
    out.push(`# ${code.target}: ${changed} of ${code.files.length} files differ (bundle ${code.from.sha256.slice(0, 12)} -> ${code.to.sha256.slice(0, 12)})`);
  }
  let text = `${out.join('\n')}\n`;
  text += c.source.patch;
  for (const code of c.code)
    for (const f of code.files) {
      if (f.status === 'unchanged') continue;
      text += textsToPatch(`${code.target}/${f.path}`, f.before, f.after, { from: `r${c.from.number}`, to: `r${c.to.number}` }).patch;
    }
  return text;
}
