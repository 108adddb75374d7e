/**
 * The app foundation end to end, in Debian's Chromium against the built server:
 * sign up and confirm via the outbox, create a workspace, invite a second person who
 * accepts via the outbox link, a viewer who cannot edit, sign-out, and Astro's origin
 * check (same-origin form POST accepted, cross-origin refused) on the built server.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { launchBrowser, type BrowserSession } from './support/browser';
import { startServer, type TestServer } from './support/server';

let server: TestServer;
let browser: BrowserSession;
let page: Page;
const SLUG = 'fjord-pump-controls';

async function openMailTo(p: Page, to: string, subject: RegExp): Promise<string> {
  await p.goto(`${server.url}/outbox?to=${encodeURIComponent(to)}`);
  await p.getByRole('link', { name: subject }).first().click();
  await p.getByTestId('mail-text').waitFor();
  return (await p.getByTestId('mail-text').innerText()).trim();
}

function linkFrom(text: string, path: string): string {
  const match = text.match(new RegExp(`http://127\\.0\\.0\\.1:\\d+${path}[A-Za-z0-9]+`));
  if (!match) throw new Error(`no ${path} link in mail:\n${text}`);
  return match[0];
}

describe('foundation e2e (built server, Chromium)', () => {
  beforeAll(async () => {
    server = await startServer();
    browser = await launchBrowser();
    page = await browser.newPage();
  }, 900_000); // may include the first build of the app
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('shows the home page with our own look', async () => {
    await page.goto(server.url);
    await expect(page.title()).resolves.toContain('Quiesce');
    await expect(page.getByRole('heading', { level: 1 }).innerText()).resolves.toMatch(/settle/i);
    // The UI font is shipped with the app (no CDN): the stylesheet declares it and it loads.
    const font = await page.evaluate(async () => {
      await document.fonts.ready;
      return { family: getComputedStyle(document.body).fontFamily, loaded: document.fonts.check('16px "IBM Plex Sans"') };
    });
    expect(font.family).toContain('IBM Plex Sans');
    expect(font.loaded).toBe(true);
    await browser.screenshot(page, 'foundation/01-home');
  });

  it('signs up, then confirms the address through the outbox link', async () => {
    await page.goto(`${server.url}/auth/sign-up`);
    await page.getByLabel('Your name').fill('Nadia Okafor');
    await page.getByLabel('E-mail address').fill('Nadia.Okafor@example.test');
    await page.getByLabel('Password').fill('pump station seven');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.waitForURL(/\/auth\/check-mail/);
    await expect(page.getByText('nadia.okafor@example.test').first().isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/02-check-mail');

    const text = await openMailTo(page, 'nadia.okafor@example.test', /Confirm your e-mail address/);
    await browser.screenshot(page, 'foundation/03-outbox-message');
    await page.goto(linkFrom(text, '/auth/verify/'));
    await expect(page.getByText('Address confirmed.').isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/04-verified');
  });

  it('creates a workspace', async () => {
    await page.goto(`${server.url}/workspaces`);
    await page.getByLabel('Name', { exact: true }).fill('Fjord Pump Controls');
    await page.getByRole('button', { name: 'Create workspace' }).click();
    await page.waitForURL(new RegExp(`/w/${SLUG}$`));
    await expect(page.getByRole('link', { name: 'Members' }).isVisible()).resolves.toBe(true);
    await page.goto(`${server.url}/workspaces`);
    await expect(page.getByRole('link', { name: /Fjord Pump Controls/ }).isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/05-workspaces');
  });

  it('invites a second person as viewer and signs out', async () => {
    await page.goto(`${server.url}/w/${SLUG}/members`);
    await page.getByLabel('E-mail address').fill('pavel@example.test');
    await page.getByLabel('Role', { exact: true }).selectOption('viewer');
    await page.getByRole('button', { name: 'Send invitation' }).click();
    await expect(page.getByText('Invitation sent to pavel@example.test as viewer.').isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/06-members-owner');
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/\/auth\/sign-in\?notice=signed-out/);
    await expect(page.getByText('You are signed out.').isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/07-signed-out-demo-accounts');
    const me = await page.evaluate(async () => (await fetch('/api/v1/me')).json());
    expect(me.user).toBeNull();
  });

  it('lets the invitee create an account from the outbox link and accept', async () => {
    const text = await openMailTo(page, 'pavel@example.test', /invited you to Fjord Pump Controls/);
    await page.goto(linkFrom(text, '/invites/'));
    await expect(page.getByText('as viewer').first().isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/08-invite-anonymous');
    await page.getByRole('link', { name: 'Create an account' }).click();
    await expect(page.getByLabel('E-mail address').inputValue()).resolves.toBe('pavel@example.test');
    await page.getByLabel('Your name').fill('Pavel Novak');
    await page.getByLabel('Password').fill('viewer of pumps 42');
    await page.getByRole('button', { name: 'Create account' }).click();
    await page.waitForURL(/\/auth\/check-mail/);
    await page.getByRole('link', { name: 'Continue' }).click();
    await page.waitForURL(/\/invites\//);
    await page.getByRole('button', { name: 'Accept and open the workspace' }).click();
    await page.waitForURL(new RegExp(`/w/${SLUG}$`));
    await expect(page.locator('header').getByText('viewer').isVisible()).resolves.toBe(true);
  });

  it('as a viewer, shows no edit controls and refuses edits with 403 from page and API', async () => {
    await page.goto(`${server.url}/w/${SLUG}/settings`);
    await expect(page.getByRole('button', { name: 'Rename' }).count()).resolves.toBe(0);
    await expect(page.getByRole('button', { name: /Delete/ }).count()).resolves.toBe(0);
    await expect(page.locator('input[name="name"]').count()).resolves.toBe(0);
    await browser.screenshot(page, 'foundation/09-settings-viewer');
    await page.goto(`${server.url}/w/${SLUG}/members`);
    await expect(page.getByRole('button', { name: 'Send invitation' }).count()).resolves.toBe(0);
    await expect(page.locator('select').count()).resolves.toBe(0);
    await expect(page.getByRole('cell', { name: /Pavel Novak \(you\)/ }).isVisible()).resolves.toBe(true);
    await browser.screenshot(page, 'foundation/10-members-viewer');

    const api = await page.evaluate(async (slug) => {
      const res = await fetch(`/api/v1/workspaces/${slug}`, {
        method: 'PATCH',
        headers: { 'Content-Type': 'application/json' },
        body: JSON.stringify({ name: 'Renamed by a viewer' }),
      });
      return { status: res.status, body: await res.json() };
    }, SLUG);
    expect(api.status).toBe(403);
    expect(api.body).toEqual({ error: { code: 'forbidden', message: expect.stringContaining('viewer') } });

    // A hand-made same-origin form POST reaches the page and is refused by the role check.
    const form = await page.evaluate(async (slug) => {
      const res = await fetch(`/w/${slug}/settings`, { method: 'POST', body: new URLSearchParams({ intent: 'rename', name: 'Renamed by a viewer' }) });
      return res.status;
    }, SLUG);
    expect(form).toBe(403);
    await page.goto(`${server.url}/w/${SLUG}/audit`);
    await expect(page.getByRole('heading', { name: 'Not allowed for your role' }).isVisible()).resolves.toBe(true);
    const check = await page.evaluate(async (slug) => (await (await fetch(`/api/v1/workspaces/${slug}`)).json()).workspace.name, SLUG);
    expect(check).toBe('Fjord Pump Controls');
  });

  it('gives a non-member 404 for another workspace', async () => {
    await page.goto(`${server.url}/w/halvorsen`);
    await expect(page.getByRole('heading', { name: 'Not found' }).isVisible()).resolves.toBe(true);
    const status = await page.evaluate(async () => (await fetch('/api/v1/workspaces/halvorsen/members')).status);
    expect(status).toBe(404);
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/signed-out/);
  });

  it('accepts a same-origin form POST on the built server and the owner sees the audit log', async () => {
    await page.goto(`${server.url}/auth/sign-in`);
    await page.getByLabel('E-mail address').fill('nadia.okafor@example.test');
    await page.getByLabel('Password').fill('pump station seven');
    await page.getByRole('button', { name: 'Sign in', exact: true }).click();
    await page.waitForURL(/\/workspaces$/);
    await page.goto(`${server.url}/w/${SLUG}/settings`);
    await page.getByLabel('Workspace name').fill('Fjord Pump Controls (test bay)');
    const [response] = await Promise.all([
      page.waitForResponse((r) => r.url().endsWith(`/w/${SLUG}/settings`) && r.request().method() === 'POST'),
      page.getByRole('button', { name: 'Rename' }).click(),
    ]);
    expect(response.status()).toBe(200);
    await expect(page.getByText('Workspace renamed.').isVisible()).resolves.toBe(true);
    await page.goto(`${server.url}/w/${SLUG}/audit`);
    await page.getByTestId('audit-table').waitFor();
    const actions = await page.getByTestId('audit-table').locator('tbody tr td:nth-child(3)').allInnerTexts();
    expect(actions).toEqual(expect.arrayContaining(['workspace.renamed', 'member.joined', 'member.invited', 'workspace.created', 'auth.sign-in']));
    await page.getByLabel('Filter').fill('renamed');
    await expect(page.getByTestId('audit-table').locator('tbody tr').count()).resolves.toBe(1);
    await page.getByLabel('Filter').fill('');
    await browser.screenshot(page, 'foundation/11-audit-owner');
  });

  it('refuses a cross-origin form POST and a cross-origin JSON write', async () => {
    const cookies = await browser.context.cookies(server.url);
    const cookie = cookies.map((c) => `${c.name}=${c.value}`).join('; ');
    const formPost = await fetch(`${server.url}/w/${SLUG}/settings`, {
      method: 'POST',
      headers: { Origin: 'http://attacker.invalid', 'Content-Type': 'application/x-www-form-urlencoded', Cookie: cookie },
      body: 'intent=rename&name=Pwned',
      redirect: 'manual',
    });
    expect(formPost.status).toBe(403);
    const jsonPost = await fetch(`${server.url}/api/v1/workspaces/${SLUG}`, {
      method: 'PATCH',
      headers: { Origin: 'http://attacker.invalid', 'Content-Type': 'application/json', Cookie: cookie },
      body: JSON.stringify({ name: 'Pwned' }),
    });
    expect(jsonPost.status).toBe(403);
    expect(await jsonPost.json()).toEqual({ error: { code: 'cross_origin', message: expect.any(String) } });
    const name = await page.evaluate(async (slug) => (await (await fetch(`/api/v1/workspaces/${slug}`)).json()).workspace.name, SLUG);
    expect(name).toBe('Fjord Pump Controls (test bay)');
  });

  it('answers bad API input with JSON errors, never 500', async () => {
    const malformed = await fetch(`${server.url}/api/v1/auth/sign-in`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{"email":' });
    expect(malformed.status).toBe(400);
    expect((await malformed.json()).error.code).toBe('malformed_json');
    const invalid = await fetch(`${server.url}/api/v1/auth/sign-up`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ email: 'x', password: 1 }) });
    expect(invalid.status).toBe(400);
    expect((await invalid.json()).error).toMatchObject({ code: 'invalid', field: expect.any(String) });
    const huge = await fetch(`${server.url}/api/v1/auth/sign-in`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: `{"email":"${'a'.repeat(1_100_000)}"}` });
    expect(huge.status).toBe(413);
    const anonymous = await fetch(`${server.url}/api/v1/workspaces`);
    expect(anonymous.status).toBe(401);
    expect(await anonymous.json()).toEqual({ error: { code: 'unauthenticated', message: expect.any(String) } });
    const unknownAudit = await fetch(`${server.url}/api/v1/workspaces/${SLUG}/audit?before=abc`);
    expect(unknownAudit.status).toBe(401);
  });

  it('lists the demo accounts in demo mode and signs in with one of them', async () => {
    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(/signed-out/);
    await page.getByRole('button', { name: 'Sign in as the demo viewer' }).click();
    await page.waitForURL(/\/workspaces$/);
    const card = page.getByRole('link', { name: /Halvorsen Machine Works/ });
    await expect(card.innerText()).resolves.toMatch(/3 controllers · 4 members\s*viewer/);
    await page.emulateMedia({ colorScheme: 'dark' });
    await browser.screenshot(page, 'foundation/12-workspaces-dark');
    await page.goto(`${server.url}/w/halvorsen/members`);
    await browser.screenshot(page, 'foundation/13-members-dark');
    await page.emulateMedia({ colorScheme: 'light' });
  });

  it('kept every browser request on loopback', () => {
    expect(browser.hosts().length).toBeGreaterThan(0);
    browser.assertLoopbackOnly();
  });
});
