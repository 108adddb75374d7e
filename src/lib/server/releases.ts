/**
 * Releases: an approved revision published by an owner or reviewer under a version label that
 * is unique per controller. Releases are immutable (a trigger refuses updates). Semantic
 * versioning is suggested, not required: a label that is not semver, or not above the previous
 * release, is accepted with a warning. Publishing pins both targets' bundles, so the release's
 * download is byte-identical from then on.
 */
import { and, desc, eq, inArray } from 'drizzle-orm';
import semver from 'semver';
import { z } from 'zod';
import { recordAudit } from './audit';
import { ensureAllBundles, loadBundleHashes } from './bundles';
import type { Db } from './db';
import { bumpDownloadCache } from './download-cache';
import { ApiError, fail, toApiError } from './errors';
import { releaseLabelSchema } from './downloads';
import { newId } from './ids';
import { requireAction, type MemberContext } from './permissions';
import { loadReviewStates } from './review-states';
import { getRevision } from './revisions';
import { releases, reviews, revisions, users, type ControllerRow } from './schema';

/** Input of publishRelease. */
export const publishReleaseSchema = z
  .object({
    revision: z.coerce.number().int().min(1),
    label: releaseLabelSchema,
    notes: z.string().trim().max(4000, 'Release notes are at most 4000 characters.').default(''),
  })
  .strict();

/** A release as listed. */
export const releaseViewSchema = z.object({
  id: z.string(),
  label: z.string(),
  revision: z.number().int(),
  notes: z.string(),
  publishedBy: z.string().nullable(),
  publishedAt: z.string(),
  /** Pinned bundle sha256 per target. */
  bundles: z.object({ c: z.string().optional(), rust: z.string().optional() }),
});

/** A release as listed. */
export type ReleaseView = z.infer<typeof releaseViewSchema>;

/** Hints about a label that is accepted but unusual (not semver, not above the last release). */
export function checkReleaseLabel(label: string, previous: string[]): string[] {
  const warnings: string[] = [];
  const version = semver.valid(label);
  if (!version) {
    warnings.push(`"${label}" is not a semantic version (MAJOR.MINOR.PATCH, e.g. 1.4.0); CI tools that sort versions may misplace it.`);
    return warnings;
  }
  const prior = previous.map((p) => semver.valid(p)).filter((v): v is string => v !== null);
  const highest = prior.sort(semver.rcompare)[0];
  if (highest && !semver.gt(version, highest)) warnings.push(`${label} is not above the highest earlier release (${highest}).`);
  return warnings;
}

/** Lists a controller's releases, newest first. */
export async function listReleases(db: Db, controllerId: string): Promise<ReleaseView[]> {
  const rows = await db
    .select({ r: releases, number: revisions.number, by: users.displayName })
    .from(releases)
    .innerJoin(revisions, eq(revisions.id, releases.revisionId))
    .leftJoin(users, eq(users.id, releases.publishedBy))
    .where(eq(releases.controllerId, controllerId))
    .orderBy(desc(releases.publishedAt), desc(releases.id));
  const hashes = await loadBundleHashes(db, [...new Set(rows.map((r) => r.r.revisionId))]);
  return rows.map(({ r, number, by }) => ({
    id: r.id,
    label: r.label,
    revision: number,
    notes: r.notes,
    publishedBy: by ?? null,
    publishedAt: r.publishedAt.toISOString(),
    bundles: hashes.get(r.revisionId) ?? {},
  }));
}

/** Release labels per revision id (for the history page). */
export async function loadReleaseLabels(db: Db, revisionIds: string[]): Promise<Map<string, string[]>> {
  const out = new Map<string, string[]>();
  if (revisionIds.length === 0) return out;
  const rows = await db
    .select({ revisionId: releases.revisionId, label: releases.label })
    .from(releases)
    .where(inArray(releases.revisionId, revisionIds))
    .orderBy(desc(releases.publishedAt));
  for (const r of rows) out.set(r.revisionId, [...(out.get(r.revisionId) ?? []), r.label]);
  return out;
}

/**
 * Publishes an approved revision as a release (owners and reviewers). 409 when the revision is
 * not approved, has error findings, or the label is taken; returns the release and label hints.
 */
export async function publishRelease(
  db: Db,
  member: MemberContext,
  controller: ControllerRow,
  input: z.input<typeof publishReleaseSchema>,
): Promise<{ release: ReleaseView; warnings: string[] }> {
  requireAction(member, 'release.publish');
  const data = publishReleaseSchema.parse(input);
  const rev = await getRevision(db, controller.id, data.revision);
  if (!rev) throw fail.notFound('Revision');
  const state = (await loadReviewStates(db, [rev.id])).get(rev.id) ?? 'none';
  if (state !== 'approved') {
    throw new ApiError(409, 'not_approved', `r${rev.number} is not approved (review state: ${state.replace('_', ' ')}); only an approved revision can be released.`, { field: 'revision' });
  }
  if (rev.findings.error > 0) throw new ApiError(409, 'has_errors', `r${rev.number} has error findings and cannot be released.`, { field: 'revision' });
  const earlier = await db.select({ label: releases.label }).from(releases).where(eq(releases.controllerId, controller.id));
  if (earlier.some((e) => e.label === data.label)) throw fail.conflict('This release label is already used for the controller.', 'label', 'already_exists');
  const warnings = checkReleaseLabel(data.label, earlier.map((e) => e.label));
  const pinned = await ensureAllBundles(db, rev);
  const id = newId();
  try {
    await db.transaction(async (tx) => {
      await tx.insert(releases).values({ id, controllerId: controller.id, revisionId: rev.id, label: data.label, notes: data.notes, publishedBy: member.userId });
      await recordAudit(tx, {
        workspaceId: member.workspace.id,
        actorUserId: member.userId,
        action: 'release.published',
        target: `${controller.slug}@r${rev.number}`,
        detail: { label: data.label, bundles: { c: pinned.c.sha256, rust: pinned.rust.sha256 }, ...(warnings.length ? { warnings } : {}) },
      });
    });
  } catch (error) {
    throw toApiError(error); // a label taken by a concurrent publish: the unique index answers 409
  }
  await bumpDownloadCache(db); // latest-release moves on
  const release = (await listReleases(db, controller.id)).find((r) => r.id === id)!;
  return { release, warnings };
}

/** The approvers of a revision (for the releases page). */
export async function listApprovers(db: Db, revisionId: string): Promise<string[]> {
  const rows = await db
    .select({ name: users.displayName })
    .from(reviews)
    .innerJoin(users, eq(users.id, reviews.reviewerId))
    .where(and(eq(reviews.revisionId, revisionId), eq(reviews.state, 'approved')));
  return rows.map((r) => r.name);
}
