/**
 * Review state of a revision, derived from its review rows, and the superseding of pending
 * reviews when a newer revision is saved. A leaf module (schema and drizzle only), so that
 * revisions.ts can call it inside its save transaction without an import cycle.
 */
import { and, eq, inArray, lt, sql } from 'drizzle-orm';
import type { Db } from './db';
import { reviews, revisions, type ReviewState } from './schema';

/** What the history page shows for a revision. `none`: no review was ever requested. */
export const REVISION_REVIEW_STATES = ['none', 'pending', 'approved', 'changes_requested', 'superseded'] as const;

/** The review state of a revision. */
export type RevisionReviewState = (typeof REVISION_REVIEW_STATES)[number];

/**
 * Folds the review rows of one revision (one row per reviewer) into its state: any request for
 * changes wins, then any approval, then anything still pending, then superseded.
 */
export function summarizeReviewStates(states: readonly ReviewState[]): RevisionReviewState {
  if (states.includes('changes_requested')) return 'changes_requested';
  if (states.includes('approved')) return 'approved';
  if (states.includes('pending')) return 'pending';
  if (states.includes('superseded')) return 'superseded';
  return 'none';
}

/** Review states of many revisions by id (revisions without reviews are `none`). */
export async function loadReviewStates(db: Db, revisionIds: string[]): Promise<Map<string, RevisionReviewState>> {
  const out = new Map<string, RevisionReviewState>(revisionIds.map((id) => [id, 'none'] as const));
  if (revisionIds.length === 0) return out;
  const rows = await db
    .select({ revisionId: reviews.revisionId, state: reviews.state })
    .from(reviews)
    .where(inArray(reviews.revisionId, revisionIds));
  const grouped = new Map<string, ReviewState[]>();
  for (const r of rows) grouped.set(r.revisionId, [...(grouped.get(r.revisionId) ?? []), r.state]);
  for (const [id, states] of grouped) out.set(id, summarizeReviewStates(states));
  return out;
}

/**
 * Marks every pending review of the controller's revisions older than `number` as superseded;
 * returns how many. Called by createRevision inside its transaction.
 */
export async function supersedePendingReviews(db: Db, controllerId: string, number: number): Promise<number> {
  const older = db
    .select({ id: revisions.id })
    .from(revisions)
    .where(and(eq(revisions.controllerId, controllerId), lt(revisions.number, number)));
  const rows = await db
    .update(reviews)
    .set({ state: 'superseded', decidedAt: sql`now()` })
    .where(and(eq(reviews.state, 'pending'), inArray(reviews.revisionId, older)))
    .returning({ id: reviews.id });
  return rows.length;
}
