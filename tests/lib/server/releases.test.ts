import { createHash } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq, sql } from 'drizzle-orm';
import { listHistory } from '../../../src/lib/server/history';
import { checkReleaseLabel, listReleases, publishRelease } from '../../../src/lib/server/releases';
import { decideReview, requestReview } from '../../../src/lib/server/reviews';
import { createRevision, getRevision } from '../../../src/lib/server/revisions';
import * as s from '../../../src/lib/server/schema';
import * as bundleRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/bundle';
import * as releasesRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/releases';
import { BACKENDS } from './support/backends';
import { addController, mailLinkOf, openWorld, callEndpoint, CALLERS, type Caller, type World } from './support/review-world';

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex');

async function approvedController(world: World, name: string): Promise<s.ControllerRow> {
  const c = await addController(world, name);
  await requestReview(world.db, world.members.editor, c, 2, {}, mailLinkOf(world));
  await decideReview(world.db, world.members.reviewer, c, 2, { verdict: 'approve' }, mailLinkOf(world));
  return c;
}

describe('release labels', () => {
  // Semantic Versioning 2.0.0 (semver.org), checked with the `semver` npm package.
  it('warns about labels that are not semver or not above the previous release', () => {
    expect(checkReleaseLabel('1.4.0', ['1.3.9', '0.9.0'])).toEqual([]);
    expect(checkReleaseLabel('1.4.0-rc.1', ['1.3.9'])).toEqual([]);
    expect(checkReleaseLabel('line3-spring', [])[0]).toMatch(/not a semantic version/);
    expect(checkReleaseLabel('1.2.0', ['1.3.0'])[0]).toMatch(/not above the highest earlier release \(1\.3\.0\)/);
  });
});

describe.each(BACKENDS)('releases on $name', (backend) => {
  let world: World;
  beforeAll(async () => {
    world = await openWorld(backend);
  });
  afterAll(async () => {
    await world?.close();
  });

  it('publishes an approved revision once per label, immutable, and serves it as latest-release', async () => {
    const c = await approvedController(world, 'Release interlock');
    await expect(publishRelease(world.db, world.members.reviewer, c, { revision: 1, label: '0.1.0' })).rejects.toMatchObject({ status: 409, code: 'not_approved' });
    const { release, warnings } = await publishRelease(world.db, world.members.reviewer, c, { revision: 2, label: '1.0.0', notes: 'First field build.' });
    expect(warnings).toEqual([]);
    expect(release).toMatchObject({ label: '1.0.0', revision: 2, notes: 'First field build.', publishedBy: 'Rhea Reviewer' });
    expect(release.bundles.c).toMatch(/^[0-9a-f]{64}$/);
    expect(release.bundles.rust).toMatch(/^[0-9a-f]{64}$/);
    await expect(publishRelease(world.db, world.members.owner, c, { revision: 2, label: '1.0.0' })).rejects.toMatchObject({ status: 409, field: 'label' });
    const second = await publishRelease(world.db, world.members.owner, c, { revision: 2, label: 'field-trial' });
    expect(second.warnings[0]).toMatch(/not a semantic version/);
    await expect(publishRelease(world.db, world.members.owner, c, { revision: 2, label: 'a/b' })).rejects.toMatchObject({ name: 'ZodError' });
    expect((await listReleases(world.db, c.id)).map((r) => r.label)).toEqual(['field-trial', '1.0.0']);
    expect((await listHistory(world.db, c.id))[0]!.releases.sort()).toEqual(['1.0.0', 'field-trial']);
    // Releases are immutable.
    const edit = await world.db.execute(sql`update releases set label = 'changed' where id = ${release.id}`).catch((e: unknown) => e);
    expect(edit).toBeInstanceOf(Error);

    // A later revision does not move the release; the label and latest-release serve the pinned zip.
    const r2 = (await getRevision(world.db, c.id, 2))!;
    await createRevision(world.db, { controllerId: c.id, baseNumber: 2, source: r2.source.replace('run/-', 'run/1'), message: 'later', author: world.users.editor.id });
    const params = (rev: string) => ({ workspace: world.slug, controller: c.slug, rev });
    const byLabel = await callEndpoint(world, bundleRoute.GET, 'key', { params: params('release:1.0.0'), query: { target: 'c' } });
    expect(byLabel.status).toBe(200);
    expect(byLabel.headers.get('x-quiesce-revision')).toBe('2');
    expect(byLabel.headers.get('x-quiesce-release')).toBe('1.0.0');
    expect(sha256(new Uint8Array(await byLabel.arrayBuffer()))).toBe(release.bundles.c);
    const latest = await callEndpoint(world, bundleRoute.GET, 'key', { params: params('latest-release'), query: { target: 'rust' } });
    expect(latest.headers.get('x-quiesce-release')).toBe('field-trial');
    expect(sha256(new Uint8Array(await latest.arrayBuffer()))).toBe(release.bundles.rust);
    const head = await callEndpoint(world, bundleRoute.GET, 'key', { params: params('latest'), query: { target: 'c' } });
    expect(head.headers.get('x-quiesce-revision')).toBe('3');
    const audit = await world.db.select().from(s.auditLog).where(eq(s.auditLog.action, 'release.published'));
    expect(audit.length).toBeGreaterThanOrEqual(2);
  });

  const PUBLISH: Record<Caller, number> = { owner: 201, editor: 403, reviewer: 201, viewer: 403, outsider: 404, anonymous: 401, key: 401 };
  const READ: Record<Caller, number> = { owner: 200, editor: 200, reviewer: 200, viewer: 200, outsider: 404, anonymous: 404, key: 200 };
  it.each(CALLERS)('role matrix: %s publishing and listing releases', async (caller) => {
    const c = await approvedController(world, `Release matrix ${caller}`);
    const params = { workspace: world.slug, controller: c.slug };
    const post = await callEndpoint(world, releasesRoute.POST, caller, { params, body: { revision: 2, label: '2.0.0' } });
    expect(post.status).toBe(PUBLISH[caller]);
    const list = await callEndpoint(world, releasesRoute.GET, caller, { params });
    expect(list.status).toBe(READ[caller]);
    if (READ[caller] === 200) {
      const body = (await list.json()) as { releases: { label: string }[] };
      expect(body.releases.map((r) => r.label)).toEqual(PUBLISH[caller] === 201 ? ['2.0.0'] : []);
    }
  });
});
