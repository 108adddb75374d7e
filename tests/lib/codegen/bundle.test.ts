/**
 * Bundles: file list, headers, manifest, and the reproducible zip (byte-identical across runs, time
 * zones and locales). Hashes are checked against node:crypto as an independent sha256.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import JSZip from 'jszip';
import canonicalize from 'canonicalize';
import { afterAll, describe, expect, it } from 'vitest';
import { generateBundle, ZIP_DATE } from '../../../src/lib/codegen/bundle';
import { GENERATOR_VERSION } from '../../../src/lib/codegen/options';
import { SAFETY_CAUTION } from '../../../src/lib/codegen/targets/common';
import { readTemplateFiles, renderTemplateModule } from '../../../src/lib/codegen/embed-templates';
import { cloneTable, tableToInterchange } from '../../../src/lib/engine/model';
import pkg from '../../../package.json';
import { loadDemoTables } from './support';

const sha256 = (data: string | Uint8Array) => createHash('sha256').update(data).digest('hex');
const demos = loadDemoTables();
const press = demos.find((d) => d.file === 'two-hand-press.json')!.table;
const work = mkdtempSync(join(tmpdir(), 'quiesce-bundle-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('generateBundle', () => {
  it('lists the files of each target, sorted', async () => {
    const c = await generateBundle(press, { target: 'c' });
    expect(c.files.map((f) => f.path)).toEqual(['Makefile', 'README.md', 'manifest.json', 'press.c', 'press.h', 'press_replay.c', 'press_test.c']);
    const rust = await generateBundle(press, { target: 'rust' });
    expect(rust.files.map((f) => f.path)).toEqual(['Cargo.toml', 'README.md', 'examples/replay.rs', 'manifest.json', 'src/lib.rs']);
  });

  it('every generated file carries the generator version, revision, source hash and the safety caution', async () => {
    for (const target of ['c', 'rust'] as const) {
      const b = await generateBundle(press, { target, revision: 'r12' });
      for (const f of b.files) {
        if (f.path === 'manifest.json') continue;
        const head = f.content.slice(0, 1200).replace(/\s*(\*|\/\/|#|>)\s*/g, ' ');
        expect(head, f.path).toContain(`Quiesce ${GENERATOR_VERSION}`);
        expect(head, f.path).toContain('revision r12');
        expect(head, f.path).toContain(b.manifest.sourceSha256);
        expect(head, f.path).toContain('IEC 61508 / ISO 13849');
        expect(head, f.path).toContain('not certified');
      }
      expect(b.files.find((f) => f.path === 'README.md')!.content).toContain(SAFETY_CAUTION);
    }
  });

  it('the manifest records generator, source hash (sha256 of the canonical JSON), options, identifiers and every file hash', async () => {
    const b = await generateBundle(press, { target: 'c', revision: 'r3' });
    const manifest = JSON.parse(b.files.find((f) => f.path === 'manifest.json')!.content);
    expect(manifest).toEqual(b.manifest);
    expect(manifest.generator.version).toBe(pkg.version);
    // RFC 8785 canonical JSON of the interchange document (canonicalize package), hashed by node:crypto
    expect(manifest.sourceSha256).toBe(sha256(canonicalize(tableToInterchange(press))!));
    expect(manifest.options).toEqual({ target: 'c', prefix: 'press', revision: 'r3', generatorVersion: pkg.version, doubleChange: 'guarded' });
    expect(manifest.identifiers.states.map((s: { name: string }) => s.name)).toEqual(press.states);
    const others = b.files.filter((f) => f.path !== 'manifest.json');
    expect(manifest.files).toEqual(others.map((f) => ({ path: f.path, bytes: Buffer.byteLength(f.content), sha256: sha256(f.content) })));
    expect(b.sha256).toBe(sha256(b.zip));
  });

  it('the zip holds exactly the files: sorted, fixed date and permissions, no folder entries', async () => {
    const b = await generateBundle(press, { target: 'rust' });
    const zip = await JSZip.loadAsync(b.zip);
    const entries = Object.values(zip.files);
    expect(entries.map((e) => e.name)).toEqual(b.files.map((f) => f.path));
    for (const e of entries) {
      expect(e.dir).toBe(false);
      expect(e.date.getTime()).toBe(ZIP_DATE.getTime());
      expect((e.unixPermissions as number) & 0o777).toBe(0o644);
      expect(await e.async('string')).toBe(b.files.find((f) => f.path === e.name)!.content);
    }
  });

  it('is byte-identical across generations, and across time zones and locales (child process)', async () => {
    for (const { table } of demos)
      for (const target of ['c', 'rust'] as const) {
        const a = await generateBundle(table, { target, revision: 'r1' });
        const b = await generateBundle(table, { target, revision: 'r1' });
        expect(Buffer.from(a.zip).equals(Buffer.from(b.zip))).toBe(true);
      }
    const here = new URL('.', import.meta.url).pathname;
    const script = join(work, 'gen.mts');
    writeFileSync(
      script,
      [
        `import { readFileSync, writeFileSync } from 'node:fs';`,
        `import { interchangeToTable } from ${JSON.stringify(join(here, '../../../src/lib/engine/model.ts'))};`,
        `import { generateBundle } from ${JSON.stringify(join(here, '../../../src/lib/codegen/bundle.ts'))};`,
        `const t = interchangeToTable(JSON.parse(readFileSync(process.argv[2], 'utf8')));`,
        `for (const target of ['c', 'rust']) writeFileSync(process.argv[3] + '.' + target, (await generateBundle(t, { target, revision: 'r1' })).zip);`,
      ].join('\n'),
    );
    const fixture = join(here, '../../fixtures/demo/two-hand-press.json');
    const out = join(work, 'zip');
    const child = spawnSync(process.execPath, ['--import', 'tsx', script, fixture, out], {
      env: { ...process.env, TZ: 'Pacific/Chatham', LANG: 'tr_TR.UTF-8', LC_ALL: 'tr_TR.UTF-8' },
      encoding: 'utf8',
      // `--import tsx` resolves from the working folder: the project root
      cwd: join(here, '../../..'),
    });
    expect(child.status, child.stderr).toBe(0);
    for (const target of ['c', 'rust'] as const) {
      const local = await generateBundle(press, { target, revision: 'r1' });
      expect(sha256(readFileSync(`${out}.${target}`))).toBe(local.sha256);
    }
  });

  it('different revisions or targets give different bytes', async () => {
    const a = await generateBundle(press, { target: 'c', revision: 'r1' });
    const b = await generateBundle(press, { target: 'c', revision: 'r2' });
    expect(a.sha256).not.toBe(b.sha256);
    expect(a.manifest.sourceSha256).toBe(b.manifest.sourceSha256);
  });

  it('writes no raw control, separator or text-direction character, even from a description and scenario names, and the crate still builds', async () => {
    // Names cannot hold these (model.ts), but the description and scenario names are free text.
    const hidden = '\u202e\u2066\u0085\u2028\u007f\u001b\ufeff';
    const t = cloneTable(press);
    t.description = `Two-hand press${hidden} control.\nSecond line.`;
    t.scenarios = [...t.scenarios, { name: `both hands${hidden}`, inputs: [t.scenarios[0]!.inputs[0]!] }];
    for (const target of ['c', 'rust'] as const) {
      const b = await generateBundle(t, { target });
      for (const f of b.files) expect(f.content, `${target}/${f.path}`).not.toMatch(/[\u0000-\u0008\u000b-\u001f\u007f-\u009f\u061c\u200e\u200f\u2028-\u202e\u2066-\u2069\ufeff]/);
      if (target !== 'rust') continue;
      const dir = join(work, 'hidden-rust');
      for (const f of b.files) {
        mkdirSync(dirname(join(dir, f.path)), { recursive: true });
        writeFileSync(join(dir, f.path), f.content);
      }
      // rustc denies direction controls in comments and literals; cargo refuses a malformed Cargo.toml.
      const check = spawnSync('cargo', ['test', '--offline', '--quiet'], { cwd: dir, encoding: 'utf8', env: { ...process.env, CARGO_TARGET_DIR: join(work, 'hidden-target') } });
      expect(check.status, `${check.stdout}\n${check.stderr}`).toBe(0);
    }
  }, 180_000);

  it('rejects bad options with the zod message', async () => {
    await expect(generateBundle(press, { target: 'c', revision: 'r 3' })).rejects.toThrow(/revision label/);
    await expect(generateBundle(press, { target: 'c', prefix: 'Bad-Prefix' })).rejects.toThrow(/prefix/);
  });

  it('template-sources.ts is in sync with templates/ (rerun src/lib/codegen/embed-templates.ts after editing a template)', () => {
    const here = new URL('.', import.meta.url).pathname;
    const module = readFileSync(join(here, '../../../src/lib/codegen/template-sources.ts'), 'utf8');
    expect(module).toBe(renderTemplateModule(readTemplateFiles()));
  });
});
