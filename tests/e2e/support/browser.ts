/**
 * Debian's Chromium through playwright-core (never a downloaded browser), with a fresh
 * profile. Every request's host is recorded; anything that is not loopback is aborted
 * and reported by assertLoopbackOnly(), which tests call at the end.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { chromium, type BrowserContext, type Page } from 'playwright-core';

/** Where e2e screenshots go (looked at by people; not compared). */
export const SCREENSHOT_DIR = path.resolve(import.meta.dirname, '../../../test-output');

const LOOPBACK = new Set(['127.0.0.1', 'localhost', '[::1]', '::1']);

/** A browser session for one test file. */
export type BrowserSession = {
  context: BrowserContext;
  /** Opens a new tab. */
  newPage: () => Promise<Page>;
  /** Every http(s)/ws(s) host requested so far. */
  hosts: () => string[];
  /** Throws when any request went (or tried to go) outside loopback. */
  assertLoopbackOnly: () => void;
  /** Saves a full-page screenshot as test-output/<name>.png and returns the path. */
  screenshot: (page: Page, name: string) => Promise<string>;
  close: () => Promise<void>;
};

/** Launches Chromium headless with a fresh profile. */
export async function launchBrowser(options: { colorScheme?: 'light' | 'dark' } = {}): Promise<BrowserSession> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), 'quiesce-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: '/usr/bin/chromium',
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
    viewport: { width: 1280, height: 860 },
    colorScheme: options.colorScheme ?? 'light',
    locale: 'en-GB',
    timezoneId: 'UTC',
  });
  const hosts = new Set<string>();
  const outside: string[] = [];
  await context.route('**/*', async (route) => {
    const url = new URL(route.request().url());
    if (/^(https?|wss?):$/.test(url.protocol)) {
      hosts.add(url.host);
      if (!LOOPBACK.has(url.hostname)) {
        outside.push(url.href);
        await route.abort('blockedbyclient');
        return;
      }
    }
    await route.continue();
  });
  context.on('request', (request) => {
    const url = new URL(request.url());
    if (/^(https?|wss?):$/.test(url.protocol)) {
      hosts.add(url.host);
      if (!LOOPBACK.has(url.hostname) && !outside.includes(url.href)) outside.push(url.href);
    }
  });
  const watchSockets = (page: Page) =>
    page.on('websocket', (ws) => {
      const url = new URL(ws.url());
      hosts.add(url.host);
      if (!LOOPBACK.has(url.hostname)) outside.push(url.href);
    });
  context.pages().forEach(watchSockets);
  context.on('page', watchSockets);
  fs.mkdirSync(SCREENSHOT_DIR, { recursive: true });
  return {
    context,
    newPage: () => context.newPage(),
    hosts: () => [...hosts],
    assertLoopbackOnly: () => {
      if (outside.length > 0) throw new Error(`requests left loopback:\n${outside.join('\n')}`);
    },
    screenshot: async (page, name) => {
      const file = path.join(SCREENSHOT_DIR, `${name}.png`);
      fs.mkdirSync(path.dirname(file), { recursive: true });
      await page.screenshot({ path: file, fullPage: true });
      return file;
    },
    close: async () => {
      await context.close();
      fs.rmSync(profile, { recursive: true, force: true });
    },
  };
}
