import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { asc, eq } from 'drizzle-orm';
import { signIn } from '../../../src/lib/server/accounts';
import { ciKeyToHash } from '../../../src/lib/server/ci-keys';
import type { DatabaseHandle } from '../../../src/lib/server/db';
import { DEMO_ACCOUNTS, DEMO_CI_KEY, DEMO_WORKSPACE } from '../../../src/lib/server/demo/accounts';
import { DEMO_CONTROLLERS } from '../../../src/lib/server/demo/controllers';
import { DEMO_RELEASE, ensureDemoRelease, seedDemo } from '../../../src/lib/server/demo/seed';
import { answerDownload } from '../../../src/lib/server/downloads';
import { listHistory } from '../../../src/lib/server/history';
import { listOutbox } from '../../../src/lib/server/mail';
import { requireMember } from '../../../src/lib/server/permissions';
import { ciKeys, controllers, releases, reviews, revisions } from '../../../src/lib/server/schema';
import { analyzeTable } from '../../../src/lib/engine/analyze';
import { parseText } from '../../../src/lib/engine/formats/text';
import { interchangeToTable, tablesEqual } from '../../../src/lib/engine/model';
import { BACKENDS } from './support/backends';

describe.each(BACKENDS)('demo seed on $name', (backend) => {
  let handle: DatabaseHandle;
  beforeAll(async () => {
    handle = await backend.open();
    await seedDemo(handle.db);
  });
  afterAll(async () => {
    await handle?.close();
  });

  it('creates one demo account per role, each able to sign in with its documented password', async () => {
    expect(DEMO_ACCOUNTS.map((a) => a.role)).toEqual(['owner', 'editor', 'reviewer', 'viewer']);
    for (const account of DEMO_ACCOUNTS) {
      const { user } = await signIn(handle.db, { email: account.email, password: account.password }, { clientKey: `seed-${backend.name}` });
      expect(user.emailVerified).toBe(true);
      const member = await requireMember(handle.db, user.id, DEMO_WORKSPACE.slug);
      expect(member.role).toBe(account.role);
      expect(member.workspace.name).toBe('Halvorsen Machine Works');
    }
  });

  it('stores r1 of each demo controller with canonical source, interchange and findings counts', async () => {
    const rows = await handle.db
      .select({ slug: controllers.slug, head: controllers.headRevision, revision: revisions })
      .from(controllers)
      .innerJoin(revisions, eq(revisions.controllerId, controllers.id))
      .orderBy(asc(controllers.slug));
    expect(rows.map((r) => [r.slug, r.head, r.revision.number])).toEqual([
      ['door-interlock', 1, 1],
      ['jog-wheel', 1, 1],
      ['two-hand-press', 1, 1],
    ]);
    for (const row of rows) {
      const demo = DEMO_CONTROLLERS.find((d) => d.slug === row.slug)!;
      const expected = interchangeToTable(demo.doc);
      // The stored source is canonical text that parses back to the same table.
      expect(tablesEqual(parseText(row.revision.source), expected)).toBe(true);
      expect(tablesEqual(interchangeToTable(row.revision.interchange), expected)).toBe(true);
      expect(row.revision.findings).toEqual(analyzeTable(expected).counts);
      expect(row.revision.findings.error).toBe(0);
    }
  });

  it('stores the documented demo CI key only as its hash', async () => {
    const keys = await handle.db.select().from(ciKeys);
    expect(keys).toHaveLength(1);
    expect(keys[0]!.keyHash).toBe(ciKeyToHash(DEMO_CI_KEY.value));
    expect(keys[0]!.keyHash).not.toContain(DEMO_CI_KEY.value);
    expect(DEMO_CI_KEY.value.startsWith(keys[0]!.prefix)).toBe(true);
    expect(keys[0]!.controllerIds).toBeNull();
  });

  it('starts with one controller reviewed, approved and released, downloadable by the demo key as latest-release', async () => {
    const [press] = await handle.db.select().from(controllers).where(eq(controllers.slug, DEMO_RELEASE.controller));
    const history = await listHistory(handle.db, press!.id);
    expect(history[0]).toMatchObject({ number: 1, review: 'approved', releases: [DEMO_RELEASE.label] });
    const answer = await answerDownload(handle.db, { bearer: DEMO_CI_KEY.value, userId: null }, { what: 'bundle', method: 'GET', params: { workspace: DEMO_WORKSPACE.slug, controller: DEMO_RELEASE.controller, rev: 'latest-release' }, search: '?target=c', ifNoneMatch: null });
    expect(answer.status).toBe(200);
    expect(answer.headers['X-Quiesce-Release']).toBe(DEMO_RELEASE.label);
    expect(answer.headers.ETag).toBe(`"${history[0]!.bundles.c}"`);
    // The review went through the outbox like any other: a request to the reviewer, a verdict to the author.
    const subjects = (await listOutbox(handle.db, { limit: 10 })).map((m) => m.subject);
    expect(subjects).toEqual(expect.arrayContaining([expect.stringMatching(/^Review requested: Two-hand control/), expect.stringMatching(/approved/i)]));
  });

  it('finishes the demo release on a later start when the first one stopped before it, and never redoes it', async () => {
    const [press] = await handle.db.select().from(controllers).where(eq(controllers.slug, DEMO_RELEASE.controller));
    const releasesBefore = await handle.db.select().from(releases).where(eq(releases.controllerId, press!.id));
    await ensureDemoRelease(handle.db); // already released: nothing happens
    expect(await handle.db.select().from(releases).where(eq(releases.controllerId, press!.id))).toEqual(releasesBefore);
    // A start that died after the seed's transaction: no review and no release yet.
    await handle.db.delete(releases).where(eq(releases.controllerId, press!.id));
    const revisionIds = (await handle.db.select({ id: revisions.id }).from(revisions).where(eq(revisions.controllerId, press!.id))).map((r) => r.id);
    for (const id of revisionIds) await handle.db.delete(reviews).where(eq(reviews.revisionId, id));
    await ensureDemoRelease(handle.db);
    expect((await handle.db.select().from(releases).where(eq(releases.controllerId, press!.id))).map((r) => r.label)).toEqual([DEMO_RELEASE.label]);
  });
});
