/**
 * Review and sign-off. An editor (or owner) asks the workspace's reviewers to review the newest
 * revision; each reviewer gets a review row and an e-mail with a link to the compare. Reviewers
 * comment on the revision or on one cell and answer approve or request changes; the author and
 * whoever asked are told by e-mail. Rules: a revision with error findings cannot be approved;
 * nobody approves their own revision; only the newest revision can be reviewed, and saving a
 * newer one supersedes the pending reviews of older ones (review-states.ts, from createRevision).
 */
import { and, asc, eq, inArray, ne, sql } from 'drizzle-orm';
import { z } from 'zod';
import { keyToColumn, interchangeToTable } from '../engine/model';
import { recordAudit } from './audit';
import { ensureAllBundles } from './bundles';
import type { Db } from './db';
import { ApiError, fail } from './errors';
import { newId } from './ids';
import { sendMail } from './mail';
import { composeMail } from './mail-templates';
import { requireAction, type MemberContext } from './permissions';
import { REVISION_REVIEW_STATES, summarizeReviewStates } from './review-states';
import { getRevision, type RevisionWithAuthor } from './revisions';
import { controllers, memberships, REVIEW_STATES, reviewComments, reviews, users, type ControllerRow, type ReviewState } from './schema';
import { pickDefaultFrom } from './compare';

/** Input of a review request: optionally the reviewers' user ids (default: every reviewer of the workspace). */
export const requestReviewSchema = z
  .object({
    reviewers: z.array(z.string().min(1).max(64)).max(50).optional(),
    note: z.string().trim().max(2000).default(''),
  })
  .strict();

/** A cell a comment is pinned to: state name and column key. */
export const cellRefSchema = z.object({ state: z.string().min(1).max(64), inputs: z.string().regex(/^[01]{1,12}$/, 'inputs is a column key of 0 and 1') }).strict();

/** Input of a comment. */
export const commentSchema = z
  .object({
    body: z.string().trim().min(1, 'Write something first.').max(4000, 'A comment is at most 4000 characters.'),
    cell: cellRefSchema.optional(),
  })
  .strict();

/** Input of a verdict. */
export const verdictSchema = z
  .object({
    verdict: z.enum(['approve', 'request_changes']),
    comment: z.string().trim().max(4000).default(''),
  })
  .strict();

/** One reviewer's review of a revision. */
export const reviewViewSchema = z.object({
  id: z.string(),
  reviewerId: z.string().nullable(),
  reviewer: z.string().nullable(),
  requestedBy: z.string().nullable(),
  state: z.enum(REVIEW_STATES),
  createdAt: z.string(),
  decidedAt: z.string().nullable(),
});

/** One reviewer's review of a revision. */
export type ReviewView = z.infer<typeof reviewViewSchema>;

/** One comment, on the revision or pinned to one cell. */
export const commentViewSchema = z.object({
  id: z.string(),
  author: z.string().nullable(),
  body: z.string(),
  cell: z.object({ state: z.string(), inputs: z.string() }).nullable(),
  createdAt: z.string(),
});

/** One comment. */
export type CommentView = z.infer<typeof commentViewSchema>;

/** The review panel of a revision: its state, reviews and comments. */
export const reviewPanelSchema = z.object({
  revision: z.number().int(),
  state: z.enum(REVISION_REVIEW_STATES),
  reviews: z.array(reviewViewSchema),
  comments: z.array(commentViewSchema),
});

/** The review panel of a revision. */
export type ReviewPanel = z.infer<typeof reviewPanelSchema>;

/** Who a link in an e-mail points to: origin and the workspace/controller slugs. */
export interface LinkContext {
  origin: string;
  workspaceSlug: string;
}

/** The compare page of a revision against its base (the link in review e-mails). */
export function comparePath(workspaceSlug: string, controllerSlug: string, rev: Pick<RevisionWithAuthor, 'number' | 'baseNumber'>): string {
  const from = pickDefaultFrom(rev);
  const query = from === null ? `to=${rev.number}` : `from=${from}&to=${rev.number}`;
  return `/w/${workspaceSlug}/c/${controllerSlug}/compare?${query}`;
}

async function requireRevision(db: Db, controller: ControllerRow, number: number): Promise<RevisionWithAuthor> {
  const rev = await getRevision(db, controller.id, number);
  if (!rev) throw fail.notFound('Revision');
  return rev;
}

async function requireHead(db: Db, controller: ControllerRow, rev: RevisionWithAuthor, verb: string): Promise<void> {
  // Read the head afresh: the controller row in hand may predate a concurrent save.
  const [row] = await db.select({ head: controllers.headRevision }).from(controllers).where(eq(controllers.id, controller.id));
  const head = row?.head ?? controller.headRevision;
  if (rev.number !== head) {
    throw new ApiError(409, 'superseded', `r${rev.number} was superseded by r${head}; ${verb} the newest revision instead.`, { field: 'revision' });
  }
}

async function sendQuietly(db: Db, message: Parameters<typeof sendMail>[1]): Promise<void> {
  // The action has already been stored; a mail problem is logged, not turned into a failure.
  await sendMail(db, message).catch((error: unknown) => console.error('[quiesce] review mail failed:', error instanceof Error ? error.message : error));
}

/** The review panel of a revision: its state, reviews and comments. */
export async function getReviewPanel(db: Db, controller: ControllerRow, number: number): Promise<ReviewPanel> {
  const rev = await requireRevision(db, controller, number);
  const reviewer = users;
  const rows = await db
    .select({ r: reviews, reviewer: reviewer.displayName })
    .from(reviews)
    .leftJoin(reviewer, eq(reviewer.id, reviews.reviewerId))
    .where(eq(reviews.revisionId, rev.id))
    .orderBy(asc(reviews.createdAt), asc(reviews.id));
  const requesterIds = [...new Set(rows.map((r) => r.r.requestedBy).filter((x): x is string => x !== null))];
  const requesters = requesterIds.length
    ? new Map((await db.select({ id: users.id, name: users.displayName }).from(users).where(inArray(users.id, requesterIds))).map((u) => [u.id, u.name] as const))
    : new Map<string, string>();
  const comments = await db
    .select({ c: reviewComments, author: users.displayName })
    .from(reviewComments)
    .leftJoin(users, eq(users.id, reviewComments.authorId))
    .where(eq(reviewComments.revisionId, rev.id))
    .orderBy(asc(reviewComments.createdAt), asc(reviewComments.id));
  return {
    revision: rev.number,
    state: summarizeReviewStates(rows.map((r) => r.r.state)),
    reviews: rows.map(({ r, reviewer: name }) => ({
      id: r.id,
      reviewerId: r.reviewerId,
      reviewer: name ?? null,
      requestedBy: r.requestedBy ? (requesters.get(r.requestedBy) ?? null) : null,
      state: r.state,
      createdAt: r.createdAt.toISOString(),
      decidedAt: r.decidedAt?.toISOString() ?? null,
    })),
    comments: comments.map(({ c, author }) => ({
      id: c.id,
      author: author ?? null,
      body: c.body,
      cell: c.cellState !== null && c.cellInputs !== null ? { state: c.cellState, inputs: c.cellInputs } : null,
      createdAt: c.createdAt.toISOString(),
    })),
  };
}

/** Members who may be asked to review: reviewers (and owners when asked by id), never the author or the asker. */
export async function listReviewCandidates(db: Db, workspaceId: string, exclude: (string | null)[]): Promise<{ id: string; email: string; displayName: string; role: string }[]> {
  const rows = await db
    .select({ id: users.id, email: users.email, displayName: users.displayName, role: memberships.role })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.workspaceId, workspaceId), inArray(memberships.role, ['owner', 'reviewer'])));
  return rows.filter((r) => !exclude.includes(r.id)).sort((a, b) => (a.role === b.role ? a.displayName.localeCompare(b.displayName) : a.role === 'reviewer' ? -1 : 1));
}

/**
 * Asks reviewers to review the newest revision; returns the reviews created. 409 when the
 * revision is not the newest or every reviewer was already asked; 400 when there is nobody to ask.
 */
export async function requestReview(
  db: Db,
  member: MemberContext,
  controller: ControllerRow,
  number: number,
  input: z.input<typeof requestReviewSchema>,
  link: LinkContext,
): Promise<ReviewView[]> {
  requireAction(member, 'review.request');
  const data = requestReviewSchema.parse(input);
  const rev = await requireRevision(db, controller, number);
  await requireHead(db, controller, rev, 'ask for a review of');
  const candidates = await listReviewCandidates(db, member.workspace.id, [member.userId, rev.authorId]);
  let chosen: typeof candidates;
  if (data.reviewers && data.reviewers.length > 0) {
    const byId = new Map(candidates.map((c) => [c.id, c] as const));
    const unknown = data.reviewers.filter((id) => !byId.has(id));
    if (unknown.length) throw fail.badRequest('Only reviewers and owners of this workspace (other than you and the author) can be asked.', 'reviewers');
    chosen = [...new Set(data.reviewers)].map((id) => byId.get(id)!);
  } else {
    chosen = candidates.filter((c) => c.role === 'reviewer');
    if (chosen.length === 0) chosen = candidates;
  }
  if (chosen.length === 0) throw fail.badRequest('This workspace has no reviewer who could review it; invite one on the Members page.', 'reviewers');

  // Pin the bundles now, so the sha256 reviewers sign off is the one CI will download.
  const pinned = await ensureAllBundles(db, rev);
  const created = await db.transaction(async (tx) => {
    const existing = await tx
      .select({ reviewerId: reviews.reviewerId })
      .from(reviews)
      .where(and(eq(reviews.revisionId, rev.id), ne(reviews.state, 'superseded')));
    const asked = new Set(existing.map((e) => e.reviewerId));
    const fresh = chosen.filter((c) => !asked.has(c.id));
    if (fresh.length === 0) throw fail.conflict(`Everyone named was already asked to review r${rev.number}.`, 'reviewers', 'already_requested');
    const rows = await tx
      .insert(reviews)
      .values(fresh.map((c) => ({ id: newId(), revisionId: rev.id, requestedBy: member.userId, reviewerId: c.id, state: 'pending' as const })))
      .returning();
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: 'review.requested',
      target: `${controller.slug}@r${rev.number}`,
      detail: { reviewers: fresh.map((c) => c.email), bundles: { c: pinned.c.sha256, rust: pinned.rust.sha256 } },
    });
    return { rows, fresh };
  });
  const [asker] = await db.select({ name: users.displayName }).from(users).where(eq(users.id, member.userId));
  const url = `${link.origin}${comparePath(link.workspaceSlug, controller.slug, rev)}#review`;
  for (const c of created.fresh) {
    await sendQuietly(
      db,
      composeMail({
        to: c.email,
        subject: `Review requested: ${controller.name} r${rev.number}`,
        heading: `Please review ${controller.name} r${rev.number}`,
        paragraphs: [
          `${asker?.name ?? 'A colleague'} asked you to review revision r${rev.number} of "${controller.name}" in ${member.workspace.name}.`,
          rev.message ? `Message: ${rev.message}` : 'The revision has no message.',
          `Findings: ${rev.findings.error} error(s), ${rev.findings.warning} warning(s), ${rev.findings.info} note(s).`,
          ...(data.note ? [`Note: ${data.note}`] : []),
          `Bundles under review: C ${pinned.c.sha256.slice(0, 16)}…, Rust ${pinned.rust.sha256.slice(0, 16)}…`,
        ],
        action: { label: 'Open the comparison', url },
        footnote: 'Approve or request changes from the review panel below the comparison.',
      }),
    );
  }
  const panel = await getReviewPanel(db, controller, rev.number);
  const ids = new Set(created.rows.map((r) => r.id));
  return panel.reviews.filter((r) => ids.has(r.id));
}

/** Adds a comment to a revision, optionally pinned to one cell (which must exist in it). */
export async function addComment(db: Db, member: MemberContext, controller: ControllerRow, number: number, input: z.input<typeof commentSchema>): Promise<CommentView> {
  requireAction(member, 'review.comment');
  const data = commentSchema.parse(input);
  const rev = await requireRevision(db, controller, number);
  if (data.cell) {
    const table = interchangeToTable(rev.interchange);
    if (!table.states.includes(data.cell.state)) throw fail.badRequest(`r${rev.number} has no state "${data.cell.state}".`, 'cell.state');
    if (data.cell.inputs.length !== table.inputs.length) {
      throw fail.badRequest(`A column key of r${rev.number} has ${table.inputs.length} characters (one per input: ${table.inputs.join(', ')}).`, 'cell.inputs');
    }
    keyToColumn(data.cell.inputs);
  }
  const [mine] = await db
    .select({ id: reviews.id })
    .from(reviews)
    .where(and(eq(reviews.revisionId, rev.id), eq(reviews.reviewerId, member.userId), ne(reviews.state, 'superseded')));
  const id = newId();
  await db.transaction(async (tx) => {
    await tx.insert(reviewComments).values({
      id,
      revisionId: rev.id,
      reviewId: mine?.id ?? null,
      authorId: member.userId,
      body: data.body,
      cellState: data.cell?.state ?? null,
      cellInputs: data.cell?.inputs ?? null,
    });
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: 'review.commented',
      target: `${controller.slug}@r${rev.number}`,
      detail: data.cell ? { cell: data.cell } : {},
    });
  });
  const panel = await getReviewPanel(db, controller, rev.number);
  return panel.comments.find((c) => c.id === id)!;
}

/**
 * Records a reviewer's verdict on the newest revision (updating their review, or adding one when
 * they were not asked) and e-mails the author and whoever asked. 409 for approving a revision
 * with error findings or an older revision; 403 for approving one's own revision.
 */
export async function decideReview(
  db: Db,
  member: MemberContext,
  controller: ControllerRow,
  number: number,
  input: z.input<typeof verdictSchema>,
  link: LinkContext,
): Promise<ReviewPanel> {
  requireAction(member, 'review.decide');
  const data = verdictSchema.parse(input);
  const rev = await requireRevision(db, controller, number);
  await requireHead(db, controller, rev, 'review');
  if (data.verdict === 'approve') {
    if (rev.findings.error > 0) {
      throw new ApiError(409, 'has_errors', `r${rev.number} has ${rev.findings.error} error finding(s) and cannot be approved; request changes instead.`, { field: 'verdict' });
    }
    if (rev.authorId === member.userId) throw new ApiError(403, 'own_revision', 'You wrote this revision; another reviewer must approve it.');
  }
  const state: ReviewState = data.verdict === 'approve' ? 'approved' : 'changes_requested';
  const notify = await db.transaction(async (tx) => {
    const [mine] = await tx
      .select()
      .from(reviews)
      .where(and(eq(reviews.revisionId, rev.id), eq(reviews.reviewerId, member.userId), ne(reviews.state, 'superseded')))
      .for('update');
    let reviewId: string;
    if (mine) {
      reviewId = mine.id;
      await tx.update(reviews).set({ state, decidedAt: sql`now()` }).where(eq(reviews.id, mine.id));
    } else {
      reviewId = newId();
      await tx.insert(reviews).values({ id: reviewId, revisionId: rev.id, requestedBy: null, reviewerId: member.userId, state, decidedAt: sql`now()` as unknown as Date });
    }
    if (data.comment) {
      await tx.insert(reviewComments).values({ id: newId(), revisionId: rev.id, reviewId, authorId: member.userId, body: data.comment });
    }
    await recordAudit(tx, {
      workspaceId: member.workspace.id,
      actorUserId: member.userId,
      action: data.verdict === 'approve' ? 'review.approved' : 'review.changes-requested',
      target: `${controller.slug}@r${rev.number}`,
      detail: data.comment ? { comment: data.comment.slice(0, 200) } : {},
    });
    const askers = await tx
      .select({ id: reviews.requestedBy })
      .from(reviews)
      .where(and(eq(reviews.revisionId, rev.id), ne(reviews.state, 'superseded')));
    return [...new Set([rev.authorId, ...askers.map((a) => a.id)].filter((x): x is string => x !== null && x !== member.userId))];
  });
  if (notify.length) {
    const people = await db.select({ email: users.email, name: users.displayName }).from(users).where(inArray(users.id, notify));
    const [me] = await db.select({ name: users.displayName }).from(users).where(eq(users.id, member.userId));
    const verb = data.verdict === 'approve' ? 'approved' : 'requested changes to';
    const url = `${link.origin}${comparePath(link.workspaceSlug, controller.slug, rev)}#review`;
    for (const p of people) {
      await sendQuietly(
        db,
        composeMail({
          to: p.email,
          subject: `${me?.name ?? 'A reviewer'} ${verb} ${controller.name} r${rev.number}`,
          heading: data.verdict === 'approve' ? `r${rev.number} of ${controller.name} is approved` : `Changes requested on r${rev.number} of ${controller.name}`,
          paragraphs: [
            `Hello ${p.name},`,
            `${me?.name ?? 'A reviewer'} ${verb} revision r${rev.number} of "${controller.name}" in ${member.workspace.name}.`,
            ...(data.comment ? [`Comment: ${data.comment}`] : []),
            data.verdict === 'approve' ? 'An owner or reviewer can now publish it as a release.' : 'Save a new revision with the changes and ask for another review.',
          ],
          action: { label: 'Open the review', url },
        }),
      );
    }
  }
  return getReviewPanel(db, controller, rev.number);
}
