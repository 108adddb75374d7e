import { parsePatch, applyPatch } from 'diff';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compareFiles, compareRevisions, comparisonSchema, comparisonToJson, comparisonToUnified, textsToPatch } from '../../../src/lib/server/compare';
import { createRevision, getRevision } from '../../../src/lib/server/revisions';
import type { ControllerRow } from '../../../src/lib/server/schema';
import * as compareRoute from '../../../src/pages/api/v1/workspaces/[workspace]/controllers/[controller]/compare';
import { BACKENDS } from './support/backends';
import { addController, openWorld, callEndpoint, CALLERS, type Caller, type World } from './support/review-world';

describe('unified diffs', () => {
  // Reference: the `diff` npm package's own parser and applier read our patches back
  // (the unified format as GNU diff and git print it; common practice, no source).
  it('makes patches that the diff package parses and applies back', () => {
    const a = 'one\ntwo\nthree\nfour\n';
    const b = 'one\n2\nthree\nfour\nfive\n';
    const { patch, additions, deletions } = textsToPatch('x.txt', a, b, { from: 'r1', to: 'r2' });
    expect(patch.startsWith('--- a/x.txt\tr1\n+++ b/x.txt\tr2\n@@ ')).toBe(true);
    expect([additions, deletions]).toEqual([2, 1]);
    expect(applyPatch(a, patch)).toBe(b);
    expect(parsePatch(patch)).toHaveLength(1);
  });

  it('names /dev/null for added and removed files and lists every path once', () => {
    const files = compareFiles([{ path: 'a.c', content: 'x\n' }, { path: 'b.c', content: 'same\n' }], [{ path: 'b.c', content: 'same\n' }, { path: 'c.c', content: 'y\n' }], { from: 'r1', to: 'r2' });
    expect(files.map((f) => [f.path, f.status])).toEqual([['a.c', 'removed'], ['b.c', 'unchanged'], ['c.c', 'added']]);
    expect(files[0]!.patch).toContain('+++ /dev/null');
    expect(files[2]!.patch).toContain('--- /dev/null');
    expect(files[1]!.patch).toBe('');
  });
});

describe.each(BACKENDS)('compare on $name', (backend) => {
  let world: World;
  let controller: ControllerRow;
  beforeAll(async () => {
    world = await openWorld(backend);
    controller = await addController(world, 'Hoist door interlock');
  });
  afterAll(async () => {
    await world?.close();
  });

  it('compares a revision against its base: changed cell, source line, findings and generated code', async () => {
    const c = await compareRevisions(world.db, controller, {});
    expect([c.from.number, c.to.number]).toEqual([1, 2]);
    expect(c.table.cellsCompared).toBe(true);
    expect(c.table.cells).toEqual([{ state: 'open_held', inputs: '11', before: 'blocked/0', after: 'open_held/0' }]);
    expect(c.source.patch).toMatch(/^-\s+open_held\s.*blocked\/0/m);
    expect(c.source.patch).toMatch(/^\+\s+open_held\s.*open_held\/0/m);
    expect([c.source.additions, c.source.deletions]).toEqual([1, 1]);
    const findingCount = c.findings.added.length + c.findings.unchanged.length;
    expect(findingCount).toBe(c.to.findings.error + c.to.findings.warning + c.to.findings.info);
    expect(c.code.map((t) => t.target)).toEqual(['c', 'rust']);
    for (const t of c.code) {
      expect(t.from.sha256).not.toBe(t.to.sha256);
      const changed = t.files.filter((f) => f.status === 'changed');
      expect(changed.length).toBeGreaterThan(0);
      for (const f of changed) expect(applyPatch(f.before!, f.patch)).toBe(f.after);
    }
    const machineC = c.code[0]!.files.find((f) => f.path.endsWith('.c') && f.status === 'changed');
    expect(machineC, 'a changed C source file').toBeDefined();
    expect(() => comparisonSchema.parse(comparisonToJson(c))).not.toThrow();
  });

  it('compares any two revisions in either order, and a revision with itself', async () => {
    const back = await compareRevisions(world.db, controller, { from: 2, to: 1, targets: [] });
    expect(back.table.cells).toEqual([{ state: 'open_held', inputs: '11', before: 'open_held/0', after: 'blocked/0' }]);
    const same = await compareRevisions(world.db, controller, { from: 2, to: 2, targets: ['c'] });
    expect(same.table.same).toBe(true);
    expect(same.source.patch).toBe('');
    expect(same.code[0]!.files.every((f) => f.status === 'unchanged')).toBe(true);
  });

  it('reports renamed states and added inputs', async () => {
    const r2 = (await getRevision(world.db, controller.id, 2))!;
    const renamed = r2.source.replace(/\bblocked\b/g, 'lockout');
    await createRevision(world.db, { controllerId: controller.id, baseNumber: 2, source: renamed, message: 'rename blocked', author: world.users.editor.id });
    const c = await compareRevisions(world.db, controller, { to: 3, targets: [] });
    expect(c.from.number).toBe(2);
    expect(c.table.states.renamed).toEqual([{ before: 'blocked', after: 'lockout' }]);
    expect(c.table.cells).toEqual([]);
  });

  it('writes one unified diff of the source and every changed generated file', async () => {
    const c = await compareRevisions(world.db, controller, { from: 1, to: 2 });
    const text = comparisonToUnified(c);
    expect(text.startsWith(`# Quiesce compare ${controller.slug} r1..r2\n`)).toBe(true);
    expect(text).toContain('#   open_held @ 11: blocked/0 -> open_held/0');
    const patches = parsePatch(text);
    const names = patches.map((p) => p.newFileName);
    expect(names).toContain(`b/${controller.slug}.qfl`);
    expect(names.some((n) => n?.startsWith('b/c/'))).toBe(true);
    expect(names.some((n) => n?.startsWith('b/rust/'))).toBe(true);
  });

  it('answers 400 for r1 without a from, and 404 for unknown revisions', async () => {
    await expect(compareRevisions(world.db, controller, { to: 1 })).rejects.toMatchObject({ status: 400, field: 'from' });
    await expect(compareRevisions(world.db, controller, { from: 1, to: 99 })).rejects.toMatchObject({ status: 404 });
  });

  const READ: Record<Caller, number> = { owner: 200, editor: 200, reviewer: 200, viewer: 200, outsider: 404, anonymous: 404, key: 200 };
  it.each(CALLERS)('role matrix: %s fetching the compare as JSON and as a unified diff', async (caller) => {
    const params = { workspace: world.slug, controller: controller.slug };
    const asJson = await callEndpoint(world, compareRoute.GET, caller, { params, query: { from: '1', to: '2', targets: 'c' } });
    expect(asJson.status).toBe(READ[caller]);
    const unified = await callEndpoint(world, compareRoute.GET, caller, { params, query: { from: '1', to: '2', format: 'unified' } });
    expect(unified.status).toBe(READ[caller]);
    if (READ[caller] === 200) {
      const body = comparisonSchema.parse(await asJson.json());
      expect(body.code.map((t) => t.target)).toEqual(['c']);
      expect(unified.headers.get('content-type')).toBe('text/plain; charset=utf-8');
      expect(await unified.text()).toContain(`+++ b/${controller.slug}.qfl`);
    }
  });

  it('answers 400 naming a bad query parameter', async () => {
    const r = await callEndpoint(world, compareRoute.GET, 'viewer', { params: { workspace: world.slug, controller: controller.slug }, query: { from: 'one' } });
    expect(r.status).toBe(400);
    expect(((await r.json()) as { error: { field: string } }).error.field).toBe('from');
  });
});
