/**
 * Review and release end to end, in Debian's Chromium against the built server: the demo editor
 * saves two revisions, opens the compare and sees a changed cell and a changed line in the C
 * diff, asks for a review; the demo reviewer follows the outbox link, approves and publishes a
 * release; then `curl` with the demo CI key downloads it and the sha256 is checked.
 * Screenshots go to test-output/review/.
 */
import { execFile } from 'node:child_process';
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_ACCOUNTS, DEMO_CI_KEY, DEMO_WORKSPACE } from '../../src/lib/server/demo/accounts';
import { launchBrowser, SCREENSHOT_DIR, type BrowserSession } from './support/browser';
import { startServer, type TestServer } from './support/server';

const run = promisify(execFile);
const account = (role: string) => DEMO_ACCOUNTS.find((a) => a.role === role)!;
const ws = DEMO_WORKSPACE.slug;
const CONTROLLER = 'door-interlock';

let server: TestServer;
let browser: BrowserSession;
let page: Page;
let releaseSha = '';
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-review-e2e-'));

async function signIn(p: Page, role: string): Promise<void> {
  const a = account(role);
  await p.goto(`${server.url}/auth/sign-in`);
  await p.locator('input[name="email"]').first().fill(a.email);
  await p.locator('input[name="password"]').first().fill(a.password);
  await Promise.all([
    p.waitForURL((u) => !u.pathname.startsWith('/auth/sign-in'), { timeout: 30_000 }),
    p.locator('form:has(input[type="password"]) button[type="submit"]').first().click(),
  ]);
}

async function signOut(p: Page): Promise<void> {
  await Promise.all([p.waitForLoadState('load'), p.getByRole('button', { name: 'Sign out' }).click()]);
}

const shot = (name: string, p: Page = page) => browser.screenshot(p, `review/${name}`);
/** A screenshot of the current viewport only (for views below the fold). */
async function viewShot(name: string): Promise<void> {
  fs.mkdirSync(path.join(SCREENSHOT_DIR, 'review'), { recursive: true });
  await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'review', `${name}.png`) });
}

/** Replaces the cell of `state` at column `key` in a canonical source (grid rows of whitespace-separated cells). */
function setCell(source: string, state: string, key: string, cell: string): string {
  const lines = source.split('\n');
  const header = lines.find((l) => l.startsWith('grid'))!.trim().split(/\s+/).slice(1);
  const col = header.indexOf(key);
  const i = lines.findIndex((l) => l.trim().split(/\s+/)[0] === state && l.startsWith(' '));
  if (col < 0 || i < 0) throw new Error(`no cell ${state} @ ${key} in:\n${source}`);
  const parts = lines[i]!.trim().split(/\s+/);
  parts[col + 1] = cell;
  lines[i] = `  ${parts.join('  ')}`;
  return lines.join('\n');
}

async function saveRevision(p: Page, base: number, source: string, message: string): Promise<number> {
  const res = await p.request.post(`${server.url}/api/v1/workspaces/${ws}/controllers/${CONTROLLER}/revisions`, { data: { base, source, message } });
  expect(res.status(), await res.text()).toBe(201);
  return ((await res.json()) as { revision: { number: number } }).revision.number;
}

describe('review and release (Chromium, built server)', () => {
  beforeAll(async () => {
    server = await startServer();
    browser = await launchBrowser();
    page = await browser.newPage();
    await page.setViewportSize({ width: 1440, height: 1000 });
    page.on('pageerror', (e) => console.error('[page error]', e.message));
  }, 900_000); // may include the first build of the app
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
    fs.rmSync(tmp, { recursive: true, force: true });
  });

  it('saves two revisions as the demo editor', async () => {
    await signIn(page, 'editor');
    const r1 = await page.request.get(`${server.url}/api/v1/workspaces/${ws}/controllers/${CONTROLLER}/revisions/1`);
    expect(r1.status()).toBe(200);
    const source1 = ((await r1.json()) as { revision: { source: string } }).revision.source;
    // r2: opening the door while running with the key released (a double change) now drops to idle.
    const source2 = setCell(source1, 'running', '00', 'open_idle/0');
    expect(await saveRevision(page, 1, source2, 'running: door opened with key released drops to idle')).toBe(2);
    // r3: the blocked state also returns to idle when the door opens and the key is released.
    const source3 = setCell(source2, 'blocked', '00', 'open_idle/0');
    expect(await saveRevision(page, 2, source3, 'blocked: release to idle')).toBe(3);
    await page.goto(`${server.url}/w/${ws}/c/${CONTROLLER}/history`);
    await expect.poll(() => page.getByTestId('history').locator('tbody tr').count()).toBe(3);
    await shot('01-history');
  });

  it('opens the compare: a changed cell, the source line and a changed line in the C diff', async () => {
    await page.goto(`${server.url}/w/${ws}/c/${CONTROLLER}/history`);
    await page.locator('tr[data-revision="3"]').getByRole('link', { name: 'Compare' }).click();
    await page.waitForURL(/\/compare\?from=2&to=3/);
    await expect(page.getByTestId('compare-title').innerText()).resolves.toMatch(/r2 → r3/);
    const after = page.getByTestId('grid-after').locator('[data-cell="blocked:00"]');
    await expect(after.getAttribute('data-changed')).resolves.toBe('yes');
    await expect(after.innerText()).resolves.toContain('open_idle');
    await expect(page.getByTestId('grid-before').locator('[data-cell="blocked:00"]').getAttribute('data-changed')).resolves.toBe('yes');
    await expect(page.getByTestId('grid-after').locator('[data-changed="yes"]').count()).resolves.toBe(1);
    await expect(page.getByTestId('changed-cells').innerText()).resolves.toMatch(/blocked\s+00\s+-\s+open_idle\/0/);
    const sourceDiff = page.getByTestId('source-diff');
    await expect(sourceDiff.locator('[data-line-kind="add"]').first().innerText()).resolves.toMatch(/blocked.*open_idle\/0/);

    // The generated C: the file list says which files changed, Monaco's diff editor shows the lines.
    const diff = page.getByTestId('code-diff');
    await diff.waitFor();
    await page.getByTestId('code-diff-tab-c').click();
    const changed = page.getByTestId('code-diff-files').locator('button[data-status="changed"]');
    await expect.poll(() => changed.count(), { timeout: 30_000 }).toBeGreaterThan(0);
    const cFile = page.getByTestId('code-diff-files').locator('button[data-status="changed"][data-path$=".c"]').first();
    await cFile.click();
    const editor = page.getByTestId('code-diff-editor');
    await editor.locator('.monaco-diff-editor').waitFor({ timeout: 60_000 });
    await expect.poll(() => editor.locator('.editor.modified .line-insert, .editor.modified .char-insert').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    await expect.poll(() => editor.locator('.editor.original .line-delete, .editor.original .char-delete').count(), { timeout: 30_000 }).toBeGreaterThan(0);
    // Beyond the header (revision label and source hash), the settled table itself changed.
    await expect.poll(async () => Number((await page.getByTestId('code-diff-changes').getAttribute('data-changes')) ?? 0), { timeout: 30_000 }).toBeGreaterThanOrEqual(2);
    await shot('02-compare');
    await editor.scrollIntoViewIfNeeded();
    await page.getByRole('button', { name: 'Next change' }).click();
    await page.getByRole('button', { name: 'Next change' }).click();
    await page.waitForTimeout(300);
    await viewShot('03-code-diff');
  });

  it('requests a review from the demo reviewer', async () => {
    const form = page.getByTestId('request-review-form');
    await expect(form.getByLabel(new RegExp(account('reviewer').displayName)).isChecked()).resolves.toBe(true);
    await form.getByRole('button', { name: 'Request review' }).click();
    await page.waitForURL(/done=review-requested/);
    await expect(page.getByText('Review requested;').isVisible()).resolves.toBe(true);
    await expect(page.getByTestId('reviews').innerText()).resolves.toMatch(/Amira Haddad\s+pending/);
    await page.getByTestId('review-panel').scrollIntoViewIfNeeded();
    await viewShot('04-review-requested');
    await signOut(page);
  });

  it('approves as the demo reviewer through the outbox link, with a comment on the changed cell', async () => {
    await signIn(page, 'reviewer');
    await page.goto(`${server.url}/outbox?to=${encodeURIComponent(account('reviewer').email)}`);
    await page.getByRole('link', { name: /Review requested: Guard door interlock/ }).first().click();
    const text = await page.getByTestId('mail-text').innerText();
    await shot('05-outbox-mail');
    const link = text.match(/http:\/\/127\.0\.0\.1:\d+\/w\/[^\s]+\/compare\?from=2&to=3#review/)?.[0];
    expect(link, text).toBeDefined();
    await page.goto(link!);
    await page.getByTestId('grid-after').locator('[data-cell="blocked:00"] a.q-cell-comment').click({ force: true });
    await page.waitForURL(/cell=blocked/);
    const comment = page.getByTestId('comment-form');
    await expect(comment.locator('select[name="cell"]').inputValue()).resolves.toBe('blocked|00');
    await comment.locator('textarea[name="body"]').fill('Good: a blocked start now clears when the door opens.');
    await comment.getByRole('button', { name: 'Add comment' }).click();
    await page.waitForURL(/done=commented/);
    const verdict = page.getByTestId('verdict-form');
    await verdict.locator('textarea[name="comment"]').fill('Checked against the safety concept.');
    await verdict.getByRole('button', { name: /Approve r3/ }).click();
    await page.waitForURL(/done=approved/);
    await expect(page.locator('[data-review-state]').first().getAttribute('data-review-state')).resolves.toBe('approved');
    await expect(page.getByTestId('comments').innerText()).resolves.toMatch(/on cell blocked @ 00/);
    await page.getByTestId('code-diff').waitFor({ timeout: 60_000 });
    await page.getByTestId('review-panel').scrollIntoViewIfNeeded();
    await viewShot('06-approved');
  });

  it('publishes release 1.0.0 as the reviewer', async () => {
    await page.getByRole('link', { name: /Publish r3 as a release/ }).click();
    const form = page.getByTestId('publish-form');
    await expect(form.locator('select[name="revision"]').inputValue()).resolves.toBe('3');
    await form.locator('input[name="label"]').fill('1.0.0');
    await form.locator('textarea[name="notes"]').fill('First release for line 3.');
    await form.getByRole('button', { name: 'Publish' }).click();
    await page.waitForURL(/published=1\.0\.0/);
    const row = page.getByTestId('releases').locator('tr[data-release="1.0.0"]');
    await expect(row.innerText()).resolves.toMatch(/r3/);
    releaseSha = (await row.innerText()).match(/C zip\s+([0-9a-f]{64})/)?.[1] ?? '';
    expect(releaseSha).toMatch(/^[0-9a-f]{64}$/);
    await shot('07-releases');
    await page.goto(`${server.url}/w/${ws}/c/${CONTROLLER}/history`);
    await expect(page.locator('tr[data-revision="3"] [data-release="1.0.0"]').count()).resolves.toBe(1);
    await expect(page.locator('tr[data-revision="3"] [data-review-state]').getAttribute('data-review-state')).resolves.toBe('approved');
    await shot('08-history-released');
  });

  it('downloads the release with curl and the demo key, byte-identical and matching its sha256', async () => {
    const base = `${server.url}/api/v1/workspaces/${ws}/controllers/${CONTROLLER}/revisions/latest-release`;
    const auth = ['-H', `Authorization: Bearer ${DEMO_CI_KEY.value}`];
    const first = path.join(tmp, 'first.zip');
    const second = path.join(tmp, 'second.zip');
    const headers = path.join(tmp, 'headers.txt');
    await run('curl', ['-fsS', ...auth, '-D', headers, '-o', first, `${base}/bundle?target=c`]);
    await run('curl', ['-fsS', ...auth, '-o', second, `${server.url}/api/v1/workspaces/${ws}/controllers/${CONTROLLER}/revisions/release:1.0.0/bundle?target=c`]);
    const bytes = fs.readFileSync(first);
    const sha = createHash('sha256').update(bytes).digest('hex');
    expect(sha).toBe(releaseSha);
    expect(createHash('sha256').update(fs.readFileSync(second)).digest('hex')).toBe(sha);
    const head = fs.readFileSync(headers, 'utf8');
    expect(head).toMatch(new RegExp(`etag: "${sha}"`, 'i'));
    expect(head).toMatch(/x-quiesce-revision: 3/i);
    expect(head).toMatch(/content-disposition: attachment; filename="door-interlock-r3-c\.zip"/i);
    const { stdout } = await run('curl', ['-fsS', ...auth, `${base}/bundle.sha256?target=c`]);
    expect(stdout).toBe(`${sha}  door-interlock-r3-c.zip\n`);
    // The checksum line checks the download with sha256sum, as a CI job would.
    fs.copyFileSync(first, path.join(tmp, 'door-interlock-r3-c.zip'));
    const check = await run('bash', ['-c', `printf '%s' "$LINE" | sha256sum -c -`], { cwd: tmp, env: { ...process.env, LINE: stdout } });
    expect(check.stdout).toMatch(/door-interlock-r3-c\.zip: OK/);
    // HEAD answers the headers only.
    const headOnly = await run('curl', ['-sSI', ...auth, `${base}/bundle?target=c`]);
    expect(headOnly.stdout).toMatch(/^HTTP\/1\.1 200/);
    expect(headOnly.stdout).toMatch(new RegExp(`content-length: ${bytes.byteLength}`, 'i'));
    // If-None-Match with the ETag answers 304; a wrong key answers 404.
    const cached = await run('curl', ['-sS', ...auth, '-o', '/dev/null', '-w', '%{http_code}', '-H', `If-None-Match: "${sha}"`, `${base}/bundle?target=c`]);
    expect(cached.stdout).toBe('304');
    const wrong = await run('curl', ['-sS', '-H', 'Authorization: Bearer qk_not_a_key', '-o', '/dev/null', '-w', '%{http_code}', `${base}/bundle?target=c`]);
    expect(wrong.stdout).toBe('404');
  });

  it('runs the README’s CI lines as written, against the demo’s seeded release', async () => {
    const readme = fs.readFileSync(path.join(import.meta.dirname, '../../README.md'), 'utf8');
    const script = readme.match(/A CI job, with the demo key[^\n]*\n\n```sh\n([\s\S]*?)```/)?.[1];
    expect(script).toBeDefined();
    const dir = fs.mkdtempSync(path.join(tmp, 'readme-'));
    const { stdout } = await run('bash', ['-euo', 'pipefail', '-c', script!.replaceAll('http://127.0.0.1:4321', server.url)], { cwd: dir });
    expect(stdout).toMatch(/two-hand-press-r1-c\.zip: OK/);
    expect(fs.readdirSync(dir)).toEqual(['two-hand-press-r1-c.zip']);
  });

  it('shows the API page with the demo key and the keys page to the owner', async () => {
    await signOut(page);
    await signIn(page, 'owner');
    await page.goto(`${server.url}/w/${ws}/api`);
    await expect(page.getByTestId('curl-ci').innerText()).resolves.toContain(DEMO_CI_KEY.value);
    await shot('09-api');
    await page.goto(`${server.url}/w/${ws}/keys`);
    await expect(page.getByTestId('keys').innerText()).resolves.toMatch(/Demo CI/);
    await expect(page.getByTestId('keys').innerText()).resolves.toMatch(/\d{4}-\d\d-\d\d \d\d:\d\d/); // last use recorded
    await shot('10-keys');
    // Any revision opens read-only, with its bundle checksums.
    await page.goto(`${server.url}/w/${ws}/c/${CONTROLLER}/r/3`);
    await expect(page.getByTestId('revision-grid').locator('[data-cell="blocked:00"]').innerText()).resolves.toContain('open_idle');
    await expect(page.getByText(releaseSha).count()).resolves.toBe(1);
    await shot('11-revision');
    // The compare in the dark theme (contrast of the change marks).
    await page.emulateMedia({ colorScheme: 'dark' });
    await page.goto(`${server.url}/w/${ws}/c/${CONTROLLER}/compare?from=2&to=3`);
    await page.getByTestId('code-diff').waitFor({ timeout: 60_000 });
    await viewShot('12-compare-dark');
    await page.emulateMedia({ colorScheme: 'light' });
    const doc = await page.request.get(`${server.url}/api/v1/openapi.json`);
    expect(((await doc.json()) as { openapi: string }).openapi).toBe('3.0.3');
    browser.assertLoopbackOnly();
  });
});
