import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { eq } from 'drizzle-orm';
import { createStarterTable } from '../../../src/lib/server/controllers';
import { createRevision, getHeadRevision, StaleBaseError } from '../../../src/lib/server/revisions';
import { revisions } from '../../../src/lib/server/schema';
import { analyzeTable } from '../../../src/lib/engine/analyze';
import { parseText } from '../../../src/lib/engine/formats/text';
import * as listRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/index';
import * as oneRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/index';
import * as exportRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/export';
import * as saveRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/index';
import * as revRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/revisions/[rev]/index';
import * as generateRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/generate';
import { BACKENDS } from './support/backends';
import { openWorld, callEndpoint, type Caller, type World } from './support/review-world';

// Gated (D) latch primitive flow table: check-data/README.md worked example (Mano and Ciletti,
// Digital Design, asynchronous sequential circuits chapter; encoded from memory).
const LATCH = `flow gated_latch
inputs D G
outputs Q
reset a

grid  00   01   11   10
  a   c/-  a/0  b/-  -
  b   -    a/-  b/1  e/-
  c   c/0  a/-  -    d/-
  d   c/-  -    b/-  d/0
  e   f/-  -    b/-  e/1
  f   f/1  a/-  -    e/-
`;

describe('starter table', () => {
  it('is a clean two-input interlock: no errors, every state reachable, one warning for the simultaneous change', () => {
    const a = analyzeTable(createStarterTable('guard'));
    expect(a.counts.error).toBe(0);
    expect(a.reachable.length).toBe(5);
    expect(a.findings.map((f) => f.code)).toEqual(['order-dependent-double-change']);
  });
});

describe.each(BACKENDS)('controller and revision endpoints on $name', (backend) => {
  let world: World;
  const params = (extra: Record<string, string> = {}) => ({ workspace: world.slug, ...extra });

  beforeAll(async () => {
    world = await openWorld(backend, `wb-${backend.name}`);
  });
  afterAll(async () => {
    await world?.close();
  });

  it('lets owners and editors create, refuses reviewers and viewers (403), hides the workspace from outsiders (404)', async () => {
    const expected: Record<Exclude<Caller, 'key'>, number> = { owner: 201, editor: 201, reviewer: 403, viewer: 403, outsider: 404, anonymous: 401 };
    for (const [caller, status] of Object.entries(expected) as [Exclude<Caller, 'key'>, number][]) {
      const r = await callEndpoint(world, listRoute.POST, caller, { params: params(), body: { name: `Starter by ${caller}`, kind: 'starter' } });
      expect([caller, r.status]).toEqual([caller, status]);
    }
    const list = await callEndpoint(world, listRoute.GET, 'viewer', { params: params() });
    const body = (await list.json()) as { controllers: { slug: string; head: number; findings: { error: number } }[] };
    expect(body.controllers.map((c) => c.slug).sort()).toEqual(['starter-by-editor', 'starter-by-owner']);
    expect(body.controllers.every((c) => c.head === 1 && c.findings.error === 0)).toBe(true);
    expect((await callEndpoint(world, listRoute.GET, 'outsider', { params: params() })).status).toBe(404);
  });

  it('imports an upload, and answers a broken one with 400 and located issues', async () => {
    const ok = await callEndpoint(world, listRoute.POST, 'editor', { params: params(), body: { name: 'Gated latch', kind: 'upload', upload: { filename: 'gated-latch.qfl', text: LATCH } } });
    expect(ok.status).toBe(201);
    expect(((await ok.json()) as { url: string }).url).toBe(`/w/${world.slug}/c/gated-latch`);
    const bad = await callEndpoint(world, listRoute.POST, 'editor', { params: params(), body: { name: 'Broken', kind: 'upload', upload: { filename: 'x.qfl', text: LATCH.replace('e/1', 'q/1') } } });
    expect(bad.status).toBe(400);
    const err = (await bad.json()) as { error: { code: string; message: string; issues: { line: number; column: number; message: string }[] } };
    expect(err.error.code).toBe('invalid_source');
    expect(err.error.issues[0]).toMatchObject({ line: 11, message: 'unknown state "q"' });
    expect(err.error.message).toMatch(/^11:\d+: unknown state "q"/);
    const kiss = await callEndpoint(world, listRoute.POST, 'editor', { params: params(), body: { name: 'Kiss', kind: 'upload', upload: { filename: 'a.kiss2', text: '.i 1\n.o 1\n.s 1\n0 s s 0\n1 s s 1\n' } } });
    expect(kiss.status).toBe(201);
    const unknown = await callEndpoint(world, listRoute.POST, 'editor', { params: params(), body: { name: 'Pdf', kind: 'upload', upload: { filename: 'a.pdf', text: 'x' } } });
    expect(unknown.status).toBe(400);
    const huge = await callEndpoint(world, listRoute.POST, 'editor', { params: params(), body: { name: 'Huge', kind: 'upload', upload: { filename: 'a.qfl', text: `# ${'x'.repeat(2 * 1024 * 1024)}` } } });
    expect(huge.status).toBe(413);
  });

  it('saves on the head, refuses a stale base with 409 and the head number, and stores nothing then', async () => {
    const p = params({ controller: 'gated-latch' });
    const r1 = (await (await callEndpoint(world, revRoute.GET, 'viewer', { params: { ...p, rev: '1' } })).json()) as { revision: { source: string } };
    const edited = r1.revision.source.replace(/(\n\s+a\s+c\/-\s+a\/0\s+b\/-\s+)-/, '$1d/-');
    expect(edited).not.toBe(r1.revision.source);
    const saved = await callEndpoint(world, saveRoute.POST, 'editor', { params: p, body: { base: 1, source: edited, message: 'power-up at 10 goes to d' } });
    expect(saved.status).toBe(201);
    expect(((await saved.json()) as { revision: { number: number } }).revision.number).toBe(2);
    const stale = await callEndpoint(world, saveRoute.POST, 'owner', { params: p, body: { base: 1, source: LATCH, message: 'late' } });
    expect(stale.status).toBe(409);
    expect(stale.headers.get('x-quiesce-head')).toBe('2');
    expect(((await stale.json()) as { error: { code: string; head: number } }).error).toMatchObject({ code: 'stale_base', head: 2 });
    const c = (await (await callEndpoint(world, oneRoute.GET, 'viewer', { params: p })).json()) as { controller: { id: string; head: number } };
    expect(c.controller.head).toBe(2);
    expect((await world.db.select().from(revisions).where(eq(revisions.controllerId, c.controller.id))).length).toBe(2);
    expect((await callEndpoint(world, saveRoute.POST, 'viewer', { params: p, body: { base: 2, source: LATCH, message: '' } })).status).toBe(403);
    await expect(createRevision(world.db, { controllerId: c.controller.id, baseNumber: 0, source: LATCH, message: '', author: null })).rejects.toBeInstanceOf(StaleBaseError);
    // the stored source is canonical and parses back to the same table
    const head = await getHeadRevision(world.db, c.controller.id);
    expect(parseText(head!.source).states).toEqual(['a', 'b', 'c', 'd', 'e', 'f']);
  });

  it('exports any revision in every format, renames and archives', async () => {
    const p = params({ controller: 'gated-latch' });
    for (const [format, pattern] of [
      ['text', /^flow gated_latch/],
      ['json', /"format": ?"quiesce-flow-table"/],
      ['kiss2', /\.i 2/],
      ['csv', /a/],
    ] as const) {
      const r = await callEndpoint(world, exportRoute.GET, 'viewer', { params: p, query: { format, rev: '1' } });
      expect([format, r.status]).toEqual([format, 200]);
      expect(r.headers.get('content-disposition')).toContain(`gated-latch-r1.`);
      expect(await r.text()).toMatch(pattern);
    }
    expect((await callEndpoint(world, exportRoute.GET, 'viewer', { params: p, query: { format: 'pdf' } })).status).toBe(400);
    expect((await callEndpoint(world, oneRoute.PATCH, 'viewer', { params: p, method: 'PATCH', body: { name: 'x' } })).status).toBe(403);
    expect((await callEndpoint(world, oneRoute.PATCH, 'editor', { params: p, method: 'PATCH', body: { name: 'Gated D latch' } })).status).toBe(200);
    expect((await callEndpoint(world, oneRoute.PATCH, 'editor', { params: p, method: 'PATCH', body: { archived: true } })).status).toBe(200);
    const list = (await (await callEndpoint(world, listRoute.GET, 'editor', { params: params() })).json()) as { controllers: { slug: string }[] };
    expect(list.controllers.some((c) => c.slug === 'gated-latch')).toBe(false);
    const all = (await (await callEndpoint(world, listRoute.GET, 'editor', { params: params(), query: { archived: '1' } })).json()) as { controllers: { slug: string; name: string; archived: boolean }[] };
    expect(all.controllers.find((c) => c.slug === 'gated-latch')).toMatchObject({ name: 'Gated D latch', archived: true });
  });

  it('generates a preview and a zip of a draft for every member, not for outsiders', async () => {
    const p = params({ controller: 'gated-latch' });
    const r = await callEndpoint(world, generateRoute.POST, 'viewer', { params: p, body: { source: LATCH, target: 'c' } });
    expect(r.status).toBe(200);
    const body = (await r.json()) as { files: { path: string }[]; sha256: string };
    expect(body.files.map((f) => f.path)).toContain('Makefile');
    expect(body.sha256).toMatch(/^[0-9a-f]{64}$/);
    const zip = await callEndpoint(world, generateRoute.POST, 'viewer', { params: p, query: { download: '1' }, body: { source: LATCH, target: 'rust', revision: 'r2' } });
    expect(zip.headers.get('content-type')).toBe('application/zip');
    expect(new Uint8Array(await zip.arrayBuffer()).slice(0, 2)).toEqual(new Uint8Array([0x50, 0x4b]));
    expect((await callEndpoint(world, generateRoute.POST, 'outsider', { params: p, body: { source: LATCH, target: 'c' } })).status).toBe(404);
    const bad = await callEndpoint(world, generateRoute.POST, 'viewer', { params: p, body: { source: 'flow x\ninputs a\n', target: 'c' } });
    expect(bad.status).toBe(400);
  });
});
