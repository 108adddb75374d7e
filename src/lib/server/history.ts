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
import { listRevisions, revisionSummarySchema, revisionToSummary } from './revisions';
import { controllers, releases } from './schema';

/** One row of the history page and of the revisions API. */
export const historyEntrySchema = revisionSummarySchema.extend({
  review: z.enum(REVISION_REVIEW_STATES),
  releases: z.array(z.string()),
  /** Pinned bundle sha256 per target; a target is absent until its bundle was first made. */
  bundles: z.object({ c: z.string().optional(), rust: z.string().optional() }),
});

/** One row of the history page and of the revisions API. */
export type HistoryEntry = z.infer<typeof historyEntrySchema>;

/** Every revision of a controller, newest first, with review state, releases and bundle hashes. */
export async function listHistory(db: Db, controllerId: string): Promise<HistoryEntry[]> {
  const rows = await listRevisions(db, controllerId);
  const ids = rows.map((r) => r.id);
  const [states, labels, hashes] = [await loadReviewStates(db, ids), await loadReleaseLabels(db, ids), await loadBundleHashes(db, ids)];
  return rows.map((r) => ({
    ...revisionToSummary(r),
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
