/** Seeds the demo workspace on the first start of an empty database in demo mode. */
import { analyzeTable } from '../../engine/analyze';
import { tableToText } from '../../engine/formats/text';
import { interchangeToTable, tableToInterchange } from '../../engine/model';
import { recordAudit } from '../audit';
import { ciKeyToHash, ciKeyToPrefix } from '../ci-keys';
import type { Db } from '../db';
import { newId } from '../ids';
import { hashPassword } from '../passwords';
import { ciKeys, controllers, memberships, revisions, users, workspaces } from '../schema';
import { DEMO_ACCOUNTS, DEMO_CI_KEY, DEMO_WORKSPACE } from './accounts';
import { DEMO_CONTROLLERS } from './controllers';

/** Inserts demo users, the demo workspace, its controllers (r1 each) and the demo CI key. */
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
}
