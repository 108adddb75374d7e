/**
 * The history of a controller: every revision with its findings counts, review state, release
 * labels and pinned bundle hashes (the revision's sha256 per target, once generated).
 */
import { and, asc, desc, eq, inArray, isNull } from 'drizzle-orm';
import { z } from 'zod';
import { loadBundleHashes } from './bundles';
import type { Db } from './db';
import { loadReleaseLabels } from './releases';
import { loadReviewStates, REVISION_REVIEW_STATES } from './review-states';
import { controllers, releases, revisions, users } from './schema';

/** One row of the history page and of the revisions API. */
export const historyEntrySchema = z.object({
  number: z.number().int(),
  base: z.number().int().nullable(),
  message: z.string(),
  author: z.string().nullable(),
  createdAt: z.string(),
  findings: z.object({ error: z.number().int(), warning: z.number().int(), info: z.number().int() }),
  review: z.enum(REVISION_REVIEW_STATES),
  releases: z.array(z.string()),
  /** Pinned bundle sha256 per target; a target is absent until its bundle was first made. */
  bundles: z.object({ c: z.string().optional(), rust: z.string().optional() }),
});

/** One row of the history page and of the revisions API. */
export type HistoryEntry = z.infer<typeof historyEntrySchema>;

/** Every revision of a controller, newest first, with review state, releases and bundle hashes. */
export async function listHistory(db: Db, controllerId: string): Promise<HistoryEntry[]> {
  const rows = await db
    .select({
      id: revisions.id,
      number: revisions.number,
      base: revisions.baseNumber,
      message: revisions.message,
      findings: revisions.findings,
      createdAt: revisions.createdAt,
      author: users.displayName,
    })
    .from(revisions)
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(eq(revisions.controllerId, controllerId))
    .orderBy(desc(revisions.number));
  const ids = rows.map((r) => r.id);
  const [states, labels, hashes] = [await loadReviewStates(db, ids), await loadReleaseLabels(db, ids), await loadBundleHashes(db, ids)];
  return rows.map((r) => ({
    number: r.number,
    base: r.base,
    message: r.message,
    author: r.author ?? null,
    createdAt: r.createdAt.toISOString(),
    findings: r.findings,
    review: states.get(r.id) ?? 'none',
    releases: labels.get(r.id) ?? [],
    bundles: hashes.get(r.id) ?? {},
  }));
}

/** The controllers of a workspace by name (slug, name, head, newest release label) for pickers and examples. */
export async function listControllerChoices(db: Db, workspaceId: string): Promise<{ id: string; slug: string; name: string; head: number; lastRelease: string | null }[]> {
  const rows = await db
    .select({ id: controllers.id, slug: controllers.slug, name: controllers.name, head: controllers.headRevision })
    .from(controllers)
    .where(and(eq(controllers.workspaceId, workspaceId), isNull(controllers.archivedAt)))
    .orderBy(asc(controllers.name));
  const rel = rows.length
    ? await db
        .select({ controllerId: releases.controllerId, label: releases.label })
        .from(releases)
        .where(inArray(releases.controllerId, rows.map((r) => r.id)))
        .orderBy(desc(releases.publishedAt))
    : [];
  const last = new Map<string, string>();
  for (const r of rel) if (!last.has(r.controllerId)) last.set(r.controllerId, r.label);
  return rows.map((r) => ({ ...r, lastRelease: last.get(r.id) ?? null }));
}
