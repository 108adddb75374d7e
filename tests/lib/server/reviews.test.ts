import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { and, eq } from 'drizzle-orm';
import { listHistory } from '../../../src/lib/server/history';
import { listOutbox } from '../../../src/lib/server/mail';
import { addComment, decideReview, getReviewPanel, requestReview } from '../../../src/lib/server/reviews';
import { createRevision, getRevision, StaleBaseError } from '../../../src/lib/server/revisions';
import * as s from '../../../src/lib/server/schema';
import * as commentsRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/comments';
import * as reviewsRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/reviews';
import * as verdictRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/verdict';
import * as saveRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/index';
import { BACKENDS } from './support/backends';
import { addController, mailLinkOf, openWorld, callEndpoint, CALLERS, editStarterSource, type Caller, type World } from './support/review-world';


/** A source whose r-next has an error finding: one cell of the guard row points at nothing. */
function withErrorFinding(source: string): string {
  const lines = source.split('\n');
  const i = lines.findIndex((l) => /^\s+ready\s/.test(l));
  lines[i] = lines[i]!.replace('open/0', '-     ');
  return lines.join('\n');
}

describe.each(BACKENDS)('reviews on $name', (backend) => {
  let world: World;
  beforeAll(async () => {
    world = await openWorld(backend);
  });
  afterAll(async () => {
    await world?.close();
  });

  it('runs the review lifecycle: request, e-mail, comment on a cell, changes, new revision supersedes, approve', async () => {
    const c = await addController(world, 'Lifecycle interlock');
    const created = await requestReview(world.db, world.members.editor, c, 2, { note: 'Please check the open_held change.' }, mailLinkOf(world));
    expect(created.map((r) => [r.reviewer, r.state])).toEqual([['Rhea Reviewer', 'pending']]);
    // The e-mail goes through the outbox with a link to the compare of r2 against its base.
    const [mail] = await listOutbox(world.db, { to: world.users.reviewer.email, limit: 1 });
    expect(mail!.subject).toBe('Review requested: Lifecycle interlock r2');
    expect(mail!.text).toContain(`http://127.0.0.1:4321/w/${world.slug}/c/${c.slug}/compare?from=1&to=2#review`);
    expect(mail!.html).toContain('Open the comparison');
    // Both bundles were pinned at request time.
    const history = await listHistory(world.db, c.id);
    expect(history[0]!.review).toBe('pending');
    expect(Object.keys(history[0]!.bundles).sort()).toEqual(['c', 'rust']);
    // Asking again for the same reviewer is refused.
    await expect(requestReview(world.db, world.members.editor, c, 2, {}, mailLinkOf(world))).rejects.toMatchObject({ status: 409, code: 'already_requested' });

    await addComment(world.db, world.members.reviewer, c, 2, { body: 'Why wait here instead of blocking?', cell: { state: 'open_held', inputs: '11' } });
    await addComment(world.db, world.members.editor, c, 2, { body: 'So a held start cannot restart the motor.' });
    await expect(addComment(world.db, world.members.reviewer, c, 2, { body: 'x', cell: { state: 'nowhere', inputs: '11' } })).rejects.toMatchObject({ status: 400, field: 'cell.state' });
    await expect(addComment(world.db, world.members.reviewer, c, 2, { body: 'x', cell: { state: 'open', inputs: '111' } })).rejects.toMatchObject({ status: 400, field: 'cell.inputs' });

    let panel = await decideReview(world.db, world.members.reviewer, c, 2, { verdict: 'request_changes', comment: 'Name the waiting state more clearly.' }, mailLinkOf(world));
    expect(panel.state).toBe('changes_requested');
    expect(panel.comments.map((x) => [x.author, x.cell])).toEqual([
      ['Rhea Reviewer', { state: 'open_held', inputs: '11' }],
      ['Emil Editor', null],
      ['Rhea Reviewer', null],
    ]);
    const [toAuthor] = await listOutbox(world.db, { to: world.users.editor.email, limit: 1 });
    expect(toAuthor!.subject).toBe('Rhea Reviewer requested changes to Lifecycle interlock r2');

    // r3 asked for review, then r4 is saved: r3's pending review is superseded.
    const r2 = (await getRevision(world.db, c.id, 2))!;
    await createRevision(world.db, { controllerId: c.id, baseNumber: 2, source: r2.source.replace(/\bopen_held\b/g, 'start_held'), message: 'rename', author: world.users.editor.id });
    await requestReview(world.db, world.members.editor, c, 3, {}, mailLinkOf(world));
    const r3 = (await getRevision(world.db, c.id, 3))!;
    await createRevision(world.db, { controllerId: c.id, baseNumber: 3, source: r3.source.replace('run/-', 'run/1'), message: 'specify run output', author: world.users.editor.id });
    panel = await getReviewPanel(world.db, c, 3);
    expect(panel.state).toBe('superseded');
    expect(panel.reviews.map((r) => r.state)).toEqual(['superseded']);
    // r2's decided review is kept as it was.
    expect((await getReviewPanel(world.db, c, 2)).state).toBe('changes_requested');
    // Older revisions can no longer be reviewed or approved.
    await expect(decideReview(world.db, world.members.reviewer, c, 3, { verdict: 'approve' }, mailLinkOf(world))).rejects.toMatchObject({ status: 409, code: 'superseded' });
    await expect(requestReview(world.db, world.members.editor, c, 3, {}, mailLinkOf(world))).rejects.toMatchObject({ status: 409, code: 'superseded' });

    await requestReview(world.db, world.members.editor, c, 4, {}, mailLinkOf(world));
    panel = await decideReview(world.db, world.members.reviewer, c, 4, { verdict: 'approve' }, mailLinkOf(world));
    expect(panel.state).toBe('approved');
    expect(panel.reviews[0]!.decidedAt).not.toBeNull();
    const [approved] = await listOutbox(world.db, { to: world.users.editor.email, limit: 1 });
    expect(approved!.subject).toBe('Rhea Reviewer approved Lifecycle interlock r4');

    const actions = (await world.db.select({ action: s.auditLog.action }).from(s.auditLog).where(eq(s.auditLog.workspaceId, world.members.owner.workspace.id))).map((a) => a.action);
    for (const a of ['review.requested', 'review.commented', 'review.changes-requested', 'review.approved']) expect(actions).toContain(a);
  });

  it('refuses to approve a revision with error findings, and an author approving their own revision', async () => {
    const c = await addController(world, 'Faulty interlock');
    const r2 = (await getRevision(world.db, c.id, 2))!;
    const r3 = await createRevision(world.db, { controllerId: c.id, baseNumber: 2, source: withErrorFinding(r2.source), message: 'leave a cell open', author: world.users.editor.id });
    expect(r3.findings.error).toBeGreaterThan(0);
    await expect(decideReview(world.db, world.members.reviewer, c, 3, { verdict: 'approve' }, mailLinkOf(world))).rejects.toMatchObject({ status: 409, code: 'has_errors' });
    // Requesting changes on it is fine.
    expect((await decideReview(world.db, world.members.reviewer, c, 3, { verdict: 'request_changes' }, mailLinkOf(world))).state).toBe('changes_requested');
    // An owner who wrote the revision cannot sign it off.
    const own = await addController(world, 'Owner-written interlock', { revisions: 1 });
    const r1 = (await getRevision(world.db, own.id, 1))!;
    await createRevision(world.db, { controllerId: own.id, baseNumber: 1, source: editStarterSource(r1.source), message: 'owner edit', author: world.users.owner.id });
    await expect(decideReview(world.db, world.members.owner, own, 2, { verdict: 'approve' }, mailLinkOf(world))).rejects.toMatchObject({ status: 403, code: 'own_revision' });
  });

  it('answers a stale-base save with 409 and loses nothing', async () => {
    const c = await addController(world, 'Contended interlock');
    const r2 = (await getRevision(world.db, c.id, 2))!;
    const params = { workspace: world.slug, controller: c.slug };
    const mine = { base: 2, source: r2.source.replace('ready/-', 'ready/0'), message: 'fill run/10' };
    const theirs = { base: 2, source: r2.source.replace('run/-', 'run/1'), message: 'specify run output' };
    const first = await callEndpoint(world, saveRoute.POST, 'owner', { params, body: theirs });
    expect(first.status).toBe(201);
    const stale = await callEndpoint(world, saveRoute.POST, 'editor', { params, body: mine });
    expect(stale.status).toBe(409);
    const body = (await stale.json()) as { error: { code: string; head: number } };
    expect(body.error.code).toBe('stale_base');
    expect(body.error.head).toBe(3);
    // Nothing was stored for the stale save, and the other save is intact.
    const revs = await world.db.select().from(s.revisions).where(eq(s.revisions.controllerId, c.id));
    expect(revs.map((r) => r.number).sort()).toEqual([1, 2, 3]);
    expect((await getRevision(world.db, c.id, 3))!.source).toMatch(/ready\s+open\/0\s+open_held\/0\s+run\/1 /);
    // The edit is not lost: re-applied on the new head it saves as r4.
    const retry = await callEndpoint(world, saveRoute.POST, 'editor', { params, body: { ...mine, base: 3, source: (await getRevision(world.db, c.id, 3))!.source.replace('ready/-', 'ready/0') } });
    expect(retry.status).toBe(201);
    await expect(createRevision(world.db, { controllerId: c.id, baseNumber: 3, source: mine.source, message: 'again', author: world.users.editor.id })).rejects.toBeInstanceOf(StaleBaseError);
  });

  // Role matrix of the review endpoints (each caller works on a fresh controller, so earlier calls do not interfere).
  const MATRIX: Record<'request' | 'comment' | 'approve' | 'read', Record<Caller, number>> = {
    request: { owner: 201, editor: 201, reviewer: 403, viewer: 403, outsider: 404, anonymous: 401, key: 401 },
    comment: { owner: 201, editor: 201, reviewer: 201, viewer: 403, outsider: 404, anonymous: 401, key: 401 },
    approve: { owner: 200, editor: 403, reviewer: 200, viewer: 403, outsider: 404, anonymous: 401, key: 401 },
    read: { owner: 200, editor: 200, reviewer: 200, viewer: 200, outsider: 404, anonymous: 404, key: 200 },
  };
  it.each(CALLERS)('role matrix: %s on request review, comment, verdict and the review panel', async (caller) => {
    const c = await addController(world, `Matrix ${caller}`);
    const params = { workspace: world.slug, controller: c.slug, rev: '2' };
    const request = await callEndpoint(world, reviewsRoute.POST, caller, { params, body: {} });
    expect(request.status, 'request').toBe(MATRIX.request[caller]);
    const comment = await callEndpoint(world, commentsRoute.POST, caller, { params, body: { body: 'Looks right.', cell: { state: 'run', inputs: '11' } } });
    expect(comment.status, 'comment').toBe(MATRIX.comment[caller]);
    const verdict = await callEndpoint(world, verdictRoute.POST, caller, { params, body: { verdict: 'approve' } });
    expect(verdict.status, 'verdict').toBe(MATRIX.approve[caller]);
    const read = await callEndpoint(world, reviewsRoute.GET, caller, { params });
    expect(read.status, 'read').toBe(MATRIX.read[caller]);
    if (MATRIX.approve[caller] === 200) expect(((await verdict.json()) as { state: string }).state).toBe('approved');
  });

  it('answers 400 for a bad body and 415 for a body that is not JSON', async () => {
    const c = await addController(world, 'Body checks');
    const params = { workspace: world.slug, controller: c.slug, rev: '2' };
    const bad = await callEndpoint(world, verdictRoute.POST, 'reviewer', { params, body: { verdict: 'maybe' } });
    expect(bad.status).toBe(400);
    expect(((await bad.json()) as { error: { field: string } }).error.field).toBe('verdict');
    const text = await callEndpoint(world, commentsRoute.POST, 'reviewer', { params, headers: { 'content-type': 'text/plain' }, method: 'POST' });
    expect(text.status).toBe(415);
    const unknownRev = await callEndpoint(world, reviewsRoute.GET, 'reviewer', { params: { ...params, rev: 'latest' } });
    expect(unknownRev.status).toBe(404);
    const reviews = await world.db.select().from(s.reviews).where(and(eq(s.reviews.state, 'approved')));
    expect(reviews.length).toBeGreaterThan(0);
  });
});
