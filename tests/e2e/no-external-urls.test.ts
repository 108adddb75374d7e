/**
 * The built client must not reach outside the app: no CDN (Monaco's loader ships one by default,
 * stripped at build time by src/lib/build/strip-cdn.ts), no external host at all. Every
 * http(s) URL in <build>/client/**\/*.js must be loopback or on the allow-list below, each entry
 * a string that is never fetched (XML namespaces, or links printed in help and error text).
 */
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { buildApp } from './support/server';

/** URLs that may appear in the bundle, and why they are harmless. */
const ALLOWED: { pattern: RegExp; why: string }[] = [
  { pattern: /^http:\/\/www\.w3\.org\/(2000\/svg|1999\/xlink|1999\/xhtml|1998\/Math\/MathML|XML\/1998\/namespace|2000\/xmlns\/?)$/, why: 'XML namespace identifiers used by React and SVG' },
  { pattern: /^http:\/\/www\.w3\.org\/2001\/XMLSchema#\w+$/, why: 'XML Schema type names inside elkjs' },
  { pattern: /^http:\/\/www\.eclipse\.org\/(emf\/200[23]\/(Ecore|XMLType)|elk\/ElkGraph)$/, why: 'model namespace identifiers inside elkjs' },
  { pattern: /^https:\/\/react\.dev\/errors\/$/, why: 'React builds this link into minified error messages; nothing is fetched' },
  { pattern: /^https:\/\/github\.com\/microsoft\/monaco-editor(\/blob\/main\/LICENSE\.txt|#faq)?$/, why: 'licence header and a help message in Monaco' },
  { pattern: /^https:\/\/github\.com\/suren-atoyan\/monaco-loader#config$/, why: 'deprecation message text of the Monaco loader' },
  { pattern: /^https:\/\/github\.com\/markedjs\/marked\.?$/, why: 'error message text of the Markdown renderer inside Monaco' },
  { pattern: /^https:\/\/code\.visualstudio\.com\/docs\/editor\/codebasics#_[\w-]+$/, why: 'help links in Monaco option descriptions' },
  { pattern: /^https:\/\/microsoft\.com$/, why: 'sample text of a Markdown link helper in Monaco' },
];

function listJs(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = join(dir, name);
    if (statSync(p).isDirectory()) out.push(...listJs(p));
    else if (p.endsWith('.js') || p.endsWith('.mjs')) out.push(p);
  }
  return out;
}

let clientDir = '';

describe('built client', () => {
  beforeAll(async () => {
    clientDir = join(await buildApp(), 'client');
  });

  it('contains no CDN address of Monaco', () => {
    expect(existsSync(clientDir)).toBe(true);
    const files = listJs(clientDir);
    expect(files.length).toBeGreaterThan(0);
    const hits = files.filter((f) => /cdn\.jsdelivr\.net|unpkg\.com|cdnjs\.cloudflare\.com/.test(readFileSync(f, 'utf8')));
    expect(hits.map((f) => relative(clientDir, f))).toEqual([]);
  });

  it('names no external host outside the allow-list', () => {
    const bad = new Map<string, string>();
    let seen = 0;
    for (const f of listJs(clientDir)) {
      const text = readFileSync(f, 'utf8');
      for (const m of text.matchAll(/https?:\/\/[A-Za-z0-9.-]+(?::\d+)?[^\s"'`)<>\\]*/g)) {
        const url = m[0].replace(/[.,;:]+$/, '');
        seen++;
        const host = new URL(url).hostname;
        if (host === 'localhost' || host === '127.0.0.1' || host === '[::1]') continue;
        if (ALLOWED.some((a) => a.pattern.test(url))) continue;
        bad.set(url, relative(clientDir, f));
      }
    }
    expect(seen).toBeGreaterThan(0); // the scan really looked at URLs (namespaces are always there)
    expect([...bad.entries()]).toEqual([]);
  });
});
