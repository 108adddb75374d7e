/** Seeds the demo workspace on the first start of an empty database in demo mode. */
import { and, eq } from 'drizzle-orm';
import { analyzeTable } from '../../engine/analyze';
import { tableToText } from '../../engine/formats/text';
import { interchangeToTable, tableToInterchange } from '../../engine/model';
import { recordAudit } from '../audit';
import { ciKeyToHash, ciKeyToPrefix } from '../ci-keys';
import { readConfig } from '../config';
import { requireController } from '../controllers';
import type { Db } from '../db';
import { newId } from '../ids';
import { hashPassword } from '../passwords';
import { requireMember } from '../permissions';
import { publishRelease } from '../releases';
import { decideReview, requestReview } from '../reviews';
import { ciKeys, controllers, memberships, releases, reviews, revisions, users, workspaces } from '../schema';
import { DEMO_ACCOUNTS, DEMO_CI_KEY, DEMO_WORKSPACE } from './accounts';
import { DEMO_CONTROLLERS } from './controllers';

/** The demo controller that starts out reviewed, approved and released, so the CI download lines work at once. */
export const DEMO_RELEASE = { controller: 'two-hand-press', label: '1.0.0' } as const;

/**
 * Inserts demo users, the demo workspace, its controllers (r1 each) and the demo CI key, then
 * takes one controller through review to a release with the same functions the app uses (so the
 * outbox holds the review mails, and the release pins real bundles).
 */
export async function seedDemo(db: Db): Promise<void> {
  const hashes = await Promise.all(DEMO_ACCOUNTS.map((a) => hashPassword(a.password)));
  await db.transaction(async (tx) => {
    const now = new Date();
    const ids = DEMO_ACCOUNTS.map(() => newId());
    await tx.insert(users).values(
      DEMO_ACCOUNTS.map((a, i) => ({
        id: ids[i]!,
        email: a.email,
        passwordHash: hashes[i]!,
        displayName: a.displayName,
        emailVerifiedAt: now,
      })),
    );
    const ownerId = ids[0]!;
    const editorId = ids[DEMO_ACCOUNTS.findIndex((a) => a.role === 'editor')] ?? ownerId;
    const workspaceId = newId();
    await tx.insert(workspaces).values({ id: workspaceId, slug: DEMO_WORKSPACE.slug, name: DEMO_WORKSPACE.name, createdBy: ownerId });
    await tx.insert(memberships).values(DEMO_ACCOUNTS.map((a, i) => ({ workspaceId, userId: ids[i]!, role: a.role })));
    for (const demo of DEMO_CONTROLLERS) {
      const table = interchangeToTable(demo.doc);
      const analysis = analyzeTable(table);
      const controllerId = newId();
      await tx.insert(controllers).values({
        id: controllerId,
        workspaceId,
        slug: demo.slug,
        name: demo.name,
        description: demo.doc.description ?? '',
        headRevision: 1,
        createdBy: editorId,
      });
      await tx.insert(revisions).values({
        id: newId(),
        controllerId,
        number: 1,
        baseNumber: null,
        authorId: editorId,
        message: demo.message,
        source: tableToText(table),
        interchange: tableToInterchange(table) as unknown as Record<string, unknown>,
        findings: { error: analysis.counts.error, warning: analysis.counts.warning, info: analysis.counts.info },
      });
      await recordAudit(tx, {
        workspaceId,
        actorUserId: editorId,
        action: 'revision.created',
        target: `${demo.slug}@r1`,
        detail: { base: 0, seeded: true },
      });
    }
    await tx.insert(ciKeys).values({
      id: newId(),
      workspaceId,
      name: DEMO_CI_KEY.name,
      keyHash: ciKeyToHash(DEMO_CI_KEY.value),
      prefix: ciKeyToPrefix(DEMO_CI_KEY.value),
      controllerIds: null,
      createdBy: ownerId,
    });
    await recordAudit(tx, { workspaceId, actorUserId: ownerId, action: 'workspace.created', target: `workspace:${DEMO_WORKSPACE.slug}`, detail: { demo: true } });
  });
  await ensureDemoRelease(db);
}

/**
 * Takes the demo's release controller through review to its release unless that happened
 * already (it runs after the seed's own transaction, so a start that died in between finishes
 * it on the next start). Does nothing without the demo workspace or once the controller has a
 * review or a release, so people's own demo activity is never redone.
 */
export async function ensureDemoRelease(db: Db): Promise<void> {
  const [press] = await db
    .select({ id: controllers.id })
    .from(controllers)
    .innerJoin(workspaces, eq(workspaces.id, controllers.workspaceId))
    .where(and(eq(workspaces.slug, DEMO_WORKSPACE.slug), eq(controllers.slug, DEMO_RELEASE.controller)));
  if (!press) return;
  const [started] = await db.select({ id: reviews.id }).from(reviews).innerJoin(revisions, eq(revisions.id, reviews.revisionId)).where(eq(revisions.controllerId, press.id)).limit(1);
  const [released] = await db.select({ id: releases.id }).from(releases).where(eq(releases.controllerId, press.id)).limit(1);
  if (started || released) return;
  const memberOf = async (role: 'editor' | 'reviewer') => {
    const email = DEMO_ACCOUNTS.find((a) => a.role === role)!.email;
    const [row] = await db.select({ id: users.id }).from(users).where(eq(users.email, email));
    return requireMember(db, row!.id, DEMO_WORKSPACE.slug);
  };
  const editor = await memberOf('editor');
  const reviewer = await memberOf('reviewer');
  const controller = await requireController(db, editor.workspace.id, DEMO_RELEASE.controller);
  const link = { origin: readConfig().publicOrigin ?? `http://127.0.0.1:${process.env.PORT ?? 4321}`, workspaceSlug: DEMO_WORKSPACE.slug };
  await requestReview(db, editor, controller, 1, { note: 'Power-up lockout and both-hands timing as in the safety concept.' }, link);
  await decideReview(db, reviewer, controller, 1, { verdict: 'approve', comment: 'Checked against the safety concept; outputs only on both hands.' }, link);
  await publishRelease(db, reviewer, controller, { revision: 1, label: DEMO_RELEASE.label, notes: 'First release for the RP-2 press (demo data).' });
}
