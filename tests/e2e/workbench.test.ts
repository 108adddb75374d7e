/**
 * The controller workbench in Chromium against the built server: create by upload, edit in the
 * grid and in the source (with its markers and completion), fix a finding, simulate, reduce, save, download and verify the C
 * bundle, and the viewer's read-only view. Screenshots of each view go to test-output/workbench/.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import JSZip from 'jszip';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser, type BrowserSession } from './support/browser';
import { startServer, type TestServer } from './support/server';
import { DEMO_ACCOUNTS, DEMO_WORKSPACE } from '../../src/lib/server/demo/accounts';

const root = resolve(import.meta.dirname, '../..');
const shots = join(root, 'test-output', 'workbench');
const origin = () => server.url;
// Gated (D) latch primitive flow table: check-data/README.md worked example (Mano and Ciletti,
// Digital Design, asynchronous sequential circuits chapter; encoded from memory).
const GATED_LATCH = readFileSync(join(root, 'tests/fixtures/formats/gated-latch.qfl'), 'utf8');
const account = (role: string) => DEMO_ACCOUNTS.find((a) => a.role === role)!;
const ws = DEMO_WORKSPACE.slug;

let server: TestServer;
let browser: BrowserSession;
let page: Page;

/** Signs in through the sign-in form and waits until it has left it. */
async function signIn(p: Page, email: string, password: string): Promise<void> {
  await p.goto(`${origin()}/auth/sign-in`);
  await p.locator('input[name="email"]').first().fill(email);
  await p.locator('input[name="password"]').first().fill(password);
  await Promise.all([p.waitForURL((u) => !u.pathname.startsWith('/auth/sign-in'), { timeout: 30_000 }), p.locator('form:has(input[type="password"]) button[type="submit"]').first().click()]);
}

async function shot(name: string, p: Page = page): Promise<void> {
  await p.screenshot({ path: join(shots, `${name}.png`), fullPage: false });
}

/** Text of the Monaco source editor (its rendered lines, spaces normalized). */
async function sourceText(p: Page = page): Promise<string> {
  return (await p.locator('[data-testid="source-editor"] .view-lines').innerText()).replace(/\u00a0/g, ' ');
}

async function openView(label: string, p: Page = page): Promise<void> {
  await p.getByRole('tab', { name: label, exact: true }).click();
}

/** A grid cell as text (`next/bits`, or `-` when unspecified), by state name and column key. */
async function gridCell(state: string, key: string, p: Page = page): Promise<string> {
  const cell = p.locator(`#view-table [role="gridcell"][data-row="${state}"][data-key="${key}"]`).first();
  if ((await cell.count()) === 0) return '(no cell)';
  return (await cell.getAttribute('data-text')) ?? '(no text)';
}

describe('controller workbench (Chromium, built server)', () => {
  beforeAll(async () => {
    mkdirSync(shots, { recursive: true });
    server = await startServer();
    browser = await launchBrowser();
    page = await browser.newPage();
    await page.setViewportSize({ width: 1440, height: 1000 });
    page.on('pageerror', (e) => console.error('[page error]', e.message));
    await signIn(page, account('editor').email, account('editor').password);
  }, 900_000);

  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('rejects a broken upload with line:column, then creates a controller by upload', async () => {
    await page.goto(`${origin()}/w/${ws}/controllers`);
    await page.locator('[data-controller]').first().waitFor(); // rows come from the API once the island runs
    await shot('01-controller-list');
    await page.getByTestId('new-controller').click();
    await page.getByTestId('kind-upload').check();
    const broken = GATED_LATCH.replace('  b   -    a/-  b/1  e/-', '  b   -    a/-  b/1  x/-');
    await page.getByTestId('upload-file').setInputFiles({ name: 'latch.qfl', mimeType: 'text/plain', buffer: Buffer.from(broken) });
    await expect.poll(() => page.getByTestId('upload-issues').innerText()).toMatch(/\d+:\d+: unknown state "x"/);
    await shot('02-upload-error');
    await page.getByTestId('upload-file').setInputFiles({ name: 'gated-latch.qfl', mimeType: 'text/plain', buffer: Buffer.from(GATED_LATCH) });
    await page.locator('input[placeholder^="e.g. Loading"]').fill('Gated latch');
    await Promise.all([page.waitForURL(/\/c\/gated-latch$/), page.getByTestId('create-submit').click()]);
    await page.getByTestId('workbench').waitFor();
    expect(await page.getByTestId('base-revision').innerText()).toContain('r1');
    expect(await gridCell('a', '01')).toBe('a/0');
    await shot('03-table');
  });

  it('edits a cell in the grid and sees the source update, and the reverse', async () => {
    // Grid → source: the unspecified cell (a, 10) becomes "d/-".
    await page.locator('[data-cell]').first().click();
    const grid = page.getByRole('grid');
    // Move to row a, column 10 (Gray order 00 01 11 10: the fourth column).
    await grid.press('Home');
    for (let i = 0; i < 3; i++) await grid.press('ArrowRight');
    await page.keyboard.type('d');
    await page.getByTestId('cell-editor').fill('d/-');
    await page.getByTestId('cell-editor').press('Enter');
    expect(await gridCell('a', '10')).toBe('d/-');
    await openView('Source');
    await expect.poll(() => sourceText(), { timeout: 30_000 }).toMatch(/a\s+c\/-\s+a\/0\s+b\/-\s+d\/-/);
    await shot('04-source');
    // Source → grid: rewrite the source so that (a, 10) is unspecified again.
    const current = await sourceText();
    const next = current.replace(/(\n\s*a\s+c\/-\s+a\/0\s+b\/-\s+)d\/-/, '$1-');
    expect(next).not.toBe(current);
    await page.locator('[data-testid="source-editor"] .view-lines').click();
    await page.keyboard.press('Control+A');
    await page.keyboard.insertText(next);
    await openView('Table');
    await expect.poll(() => gridCell('a', '10')).toBe('-');
  });

  it('marks a bad cell in the source with its message, and completes state names', async () => {
    await openView('Source');
    const lines = page.locator('[data-testid="source-editor"] .view-lines');
    // The editor renders its lines after the view opens: wait for the row this test edits.
    await expect.poll(() => sourceText(), { timeout: 30_000 }).toMatch(/\n\s*a\s+c\/-\s+a\/0\s+b\/-\s+-/);
    const before = await sourceText();
    const broken = before.replace(/(\n\s*a\s+c\/-\s+a\/0\s+b\/-\s+)-/, '$1zz/0');
    expect(broken).not.toBe(before);
    await lines.click();
    await page.keyboard.press('Control+A');
    await page.keyboard.insertText(broken);
    // The parse issue becomes an error marker; F8 (next problem) opens it with its message.
    await expect.poll(() => page.locator('[data-testid="source-editor"] .squiggly-error').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    await page.keyboard.press('Control+Home');
    await page.keyboard.press('F8');
    await expect.poll(() => page.locator('.marker-widget').first().innerText().catch(() => ''), { timeout: 15_000 }).toMatch(/unknown state "zz"/);
    await shot('04b-source-marker');
    await page.keyboard.press('Escape');
    // At the start of a new row, completion offers the table's states.
    await page.keyboard.press('Control+A');
    await page.keyboard.insertText(before);
    await page.keyboard.press('Control+End');
    await page.keyboard.press('Enter');
    await page.keyboard.type('  ');
    await page.keyboard.press('Control+Space');
    const labels = page.locator('.suggest-widget .monaco-list-row .label-name');
    await expect.poll(async () => (await labels.allInnerTexts()).join(' '), { timeout: 15_000 }).toMatch(/^a b c d e f\b/);
    await shot('04c-source-completion');
    await page.keyboard.press('Escape');
    await page.keyboard.press('Control+A');
    await page.keyboard.insertText(before);
    await openView('Table');
    await expect.poll(() => gridCell('a', '10')).toBe('-');
  });

  it('fixes a finding through its action', async () => {
    // check-data README: of 12 single-input changes, 8 need the transient cell's Q filled.
    const panel = page.getByTestId('findings-panel');
    await expect.poll(() => panel.locator('[data-finding-code="output-hazard"]').count()).toBe(8);
    await panel.locator('[data-finding-code="output-hazard"] button').first().click();
    await shot('05-finding-path');
    await openView('Fill');
    await expect.poll(() => page.getByTestId('fill-assignments').locator('tbody tr').count()).toBe(8);
    await shot('06-fill');
    await openView('Table');
    await panel.locator('[data-finding-code="output-hazard"]').first().getByTestId('fix-action').click();
    await expect.poll(() => page.getByTestId('notice').innerText()).toMatch(/Filled 8 don't-care outputs/);
    expect(await panel.locator('[data-finding-code="output-hazard"]').count()).toBe(0);
    // the power-up fix adds the missing cell
    await panel.locator('[data-finding-code="unspecified-power-up"]').getByTestId('fix-action').click();
    expect(await gridCell('a', '10')).toMatch(/^d\//);
    expect(await panel.locator('[data-finding-code="unspecified-power-up"]').count()).toBe(0);
  });

  it('simulates three steps and shows them in the waveform', async () => {
    await openView('Run');
    await page.getByTestId('power-up').click();
    // power-up at D=0 G=0 settles a → c; then G, D, G change one at a time.
    await page.keyboard.press('2');
    await page.keyboard.press('1');
    await page.keyboard.press('2');
    const wave = page.getByTestId('waveform');
    await expect.poll(() => wave.getAttribute('data-steps')).toBe('4');
    const states = await wave.locator('[data-state]').evaluateAll((els) => els.map((e) => e.getAttribute('data-state')));
    expect(states).toEqual(['c', 'a', 'b', 'e']);
    const q = await wave.locator('[data-lane="out:Q"] [data-value]').evaluateAll((els) => els.map((e) => e.getAttribute('data-value')));
    expect(q).toEqual(['0', '0', '1', '1']);
    await shot('07-run');
  });

  it('shows the map', async () => {
    await openView('Map');
    await page.getByTestId('state-map').locator('[data-state-node]').first().waitFor({ timeout: 30_000 });
    expect(await page.locator('[data-state-node]').count()).toBe(6);
    await shot('08-map');
  });

  it('reduces the gated latch to 2 rows and applies it as a draft', async () => {
    // Back to the table as published (fill and fixes undone), through the source editor.
    await openView('Source');
    await page.locator('[data-testid="source-editor"] .view-lines').click();
    await page.keyboard.press('Control+A');
    await page.keyboard.insertText(GATED_LATCH);
    await openView('Table');
    await expect.poll(() => gridCell('a', '10')).toBe('-');
    await expect.poll(() => gridCell('a', '00')).toBe('c/-');
    await openView('Reduce');
    await page.getByTestId('run-reduce').click();
    // check-data README: reduces to 2 rows; maximal compatibles {a, b}, {a, c, d}, {b, e, f}.
    await expect.poll(() => page.getByTestId('reduce-summary').innerText()).toBe('6 → 2 rows');
    const maximal = await page.getByTestId('maximal-compatibles').innerText();
    for (const m of ['{a, b}', '{a, c, d}', '{b, e, f}']) expect(maximal).toContain(m);
    await shot('09-reduce');
    await page.getByTestId('apply-reduction').click();
    await expect.poll(() => page.getByRole('grid').getAttribute('aria-label')).toMatch(/2 states/);
  });

  it('shows the settings view', async () => {
    await openView('Settings');
    await page.getByTestId('settings-panel').waitFor();
    await shot('10-settings');
  });

  it('saves a new revision', async () => {
    await page.getByTestId('save-open').click();
    await page.getByTestId('save-dialog').locator('textarea').fill('reduce to two rows, fill outputs');
    await page.getByTestId('save-submit').click();
    await expect.poll(() => page.getByTestId('notice').innerText()).toMatch(/Saved as r2/);
    expect(await page.getByTestId('base-revision').innerText()).toContain('r2');
    expect(await page.getByTestId('dirty-badge').count()).toBe(0);
  });

  it('answers a save on a stale base with the conflict screen, and reapplies the edits onto the head', async () => {
    // A second tab saves r3 first.
    const other = await browser.newPage();
    await other.setViewportSize({ width: 1440, height: 1000 });
    await other.goto(page.url());
    await other.getByTestId('workbench').waitFor();
    await other.getByTestId('save-open').waitFor();
    await other.locator('#view-table [role="gridcell"]').first().click();
    await other.keyboard.press('Alt+s');
    await other.getByRole('button', { name: '+ state' }).click();
    await other.getByTestId('save-open').click();
    await other.getByTestId('save-submit').click();
    await expect.poll(() => other.getByTestId('notice').innerText()).toMatch(/Saved as r3/);
    await other.close();
    // This tab still edits r2: its save is refused and nothing is lost.
    await openView('Table');
    const last = page.locator('#view-table [role="gridcell"]').last();
    await last.click();
    await page.keyboard.press('-');
    expect(await last.getAttribute('data-text')).toBe('-');
    await page.getByTestId('save-open').click();
    await page.getByTestId('save-submit').click();
    await page.getByTestId('conflict-screen').waitFor();
    expect(await page.getByTestId('conflict-screen').innerText()).toMatch(/Someone saved r3 while you were editing r2[\s\S]*Nothing was overwritten/);
    await page.getByTestId('conflict-compare').click();
    await page.getByTestId('conflict-diff').waitFor();
    await shot('10b-conflict');
    await page.getByTestId('conflict-reapply').click();
    await expect.poll(() => page.getByTestId('base-revision').innerText()).toContain('r3');
    expect(await page.getByTestId('notice').innerText()).toMatch(/Reapplied 1 edit onto r3/);
    expect(await page.locator('#view-table [role="gridcell"][data-row="s3"]').count()).toBeGreaterThan(0);
    await page.getByTestId('save-open').click();
    await page.getByTestId('save-submit').click();
    await expect.poll(() => page.getByTestId('notice').innerText()).toMatch(/Saved as r4/);
  });

  it('downloads the C zip, which unzips and passes its own tests with gcc', async () => {
    await openView('Build');
    await page.getByTestId('target-c').click();
    await page.getByTestId('generated-files').locator('li').first().waitFor({ timeout: 60_000 });
    expect(await page.getByTestId('safety-caution').innerText()).toContain('Generated code is not certified');
    await page.getByTestId('generated-preview').locator('.view-lines').waitFor({ timeout: 30_000 });
    await shot('11-build');
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('download-zip').click()]);
    const zipPath = await download.path();
    const zip = await JSZip.loadAsync(readFileSync(zipPath));
    const dir = mkdtempSync(join(tmpdir(), 'quiesce-wb-zip-'));
    try {
      const names = Object.keys(zip.files).filter((n) => !zip.files[n]!.dir);
      expect(names).toContain('Makefile');
      for (const n of names) {
        const p = join(dir, n);
        mkdirSync(dirname(p), { recursive: true });
        writeFileSync(p, await zip.files[n]!.async('nodebuffer'));
      }
      const out = execFileSync('make', ['test'], { cwd: dir, encoding: 'utf8', timeout: 120_000 });
      expect(out).toMatch(/\b\d+ passed, 0 failed\b/);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('shows a viewer no edit controls', async () => {
    const viewer = await launchBrowser({ colorScheme: 'dark' }); // the viewer's screenshots show the dark theme
    const vp = await viewer.newPage();
    await vp.setViewportSize({ width: 1440, height: 1000 });
    await signIn(vp, account('viewer').email, account('viewer').password);
    await vp.goto(`${origin()}/w/${ws}/c/gated-latch`);
    await vp.getByTestId('workbench').waitFor();
    await shot('12a-viewer-table-dark', vp);
    expect(await vp.getByTestId('workbench').getAttribute('data-role')).toBe('viewer');
    expect(await vp.getByTestId('save-open').count()).toBe(0);
    expect(await vp.getByRole('button', { name: /undo|redo|\+ state|\+ input|\+ output|make stable|clear cell/i }).count()).toBe(0);
    expect(await vp.getByTestId('fix-action').count()).toBe(0);
    await vp.getByRole('grid').focus();
    await vp.keyboard.press('Enter');
    expect(await vp.getByTestId('cell-editor').count()).toBe(0);
    await openView('Settings', vp);
    expect(await vp.getByTestId('settings-panel').locator('input, select, textarea').count()).toBe(0);
    await openView('Source', vp);
    await vp.locator('[data-testid="source-editor"] .view-lines').waitFor({ timeout: 30_000 });
    await shot('12b-viewer-source-dark', vp);
    await vp.goto(`${origin()}/w/${ws}/controllers`);
    await vp.getByTestId('controller-list').waitFor();
    expect(await vp.getByTestId('new-controller').count()).toBe(0);
    expect(await vp.getByRole('button', { name: /^(rename|archive)$/i }).count()).toBe(0);
    viewer.assertLoopbackOnly();
    await viewer.close();
  });

  it('virtualizes a wide table, analyzes it in the worker, and keeps a draft across a reload', async () => {
    // bbsse: MCNC/LGSynth'91 benchmark set (check-data/kiss2), 7 inputs = 128 columns, 16 states.
    const bbsse = readFileSync(join(root, '..', 'shared', 'check-data', 'kiss2', 'bbsse.kiss2'), 'utf8');
    await page.goto(`${origin()}/w/${ws}/controllers`);
    await page.locator('[data-controller]').first().waitFor(); // rows come from the API once the island runs
    await page.getByTestId('new-controller').click();
    await page.getByTestId('kind-upload').check();
    await page.getByTestId('upload-file').setInputFiles({ name: 'bbsse.kiss2', mimeType: 'text/plain', buffer: Buffer.from(bbsse) });
    await page.locator('input[placeholder^="e.g. Loading"]').fill('Benchmark bbsse');
    await Promise.all([page.waitForURL(/\/c\/benchmark-bbsse$/), page.getByTestId('create-submit').click()]);
    const grid = page.getByRole('grid');
    await grid.waitFor();
    expect(await grid.getAttribute('aria-label')).toMatch(/16 states × 128 input columns/);
    const rendered = await page.locator('#view-table [role="gridcell"]').count();
    expect(rendered).toBeGreaterThan(0);
    expect(rendered).toBeLessThan(16 * 128);
    await grid.focus();
    await grid.press('End');
    await expect.poll(() => page.locator('#view-table [role="gridcell"][aria-selected="true"]').getAttribute('aria-colindex')).toBe('129');
    // the findings of a 2048-cell table come from the worker
    await expect.poll(() => page.getByTestId('findings-panel').innerText(), { timeout: 30_000 }).toMatch(/\d+ (error|warning|note)/);
    await shot('13-wide-table');
    // an edit, then a reload: the local draft comes back
    await grid.press('Home');
    await page.keyboard.press('-');
    await expect.poll(() => page.getByTestId('dirty-badge').count()).toBe(1);
    await expect.poll(() => page.evaluate(() => Object.keys(localStorage).some((k) => k.startsWith('quiesce-draft:') && k.includes('benchmark-bbsse')))).toBe(true);
    await page.reload();
    await page.getByTestId('workbench').waitFor();
    expect(await page.getByText('Restored your unsaved draft').count()).toBe(1);
    expect(await page.getByTestId('dirty-badge').count()).toBe(1);
  });

  it('made no request outside loopback', () => {
    expect(() => browser.assertLoopbackOnly()).not.toThrow();
  });
});
