/**
 * The one template registry: a private Handlebars environment with every helper and partial
 * registered here, and a typed list of the templates each target renders. Output escaping
 * (C comments and strings, Rust strings, Markdown) lives in the helpers; layout lives in
 * format.ts.
 */
import Handlebars from 'handlebars';
import { HIDDEN_TEXT_CHARACTERS } from '../engine/model';
import { TEMPLATE_SOURCES } from './template-sources';
import type { CContext } from './targets/c';
import type { RustContext } from './targets/rust';

// Names cannot hold these, but comments, strings and READMEs also carry descriptions and scenario names.
const UNSAFE_IN_TEXT = new RegExp(`[${HIDDEN_TEXT_CHARACTERS}]`, 'g');
const isUnsafeChar = (ch: string) => ch.search(UNSAFE_IN_TEXT) === 0;

/** Text kept on one comment line: control characters, line separators and direction controls become visible escapes. */
export function toCommentLine(text: string): string {
  return text.replace(UNSAFE_IN_TEXT, (ch) => `\\u{${ch.codePointAt(0)!.toString(16)}}`);
}

/** Text made safe inside a C block comment (one line, no comment openers or closers, no trigraphs). */
export function toCComment(text: string): string {
  return toCommentLine(text).replace(/\*\//g, '* /').replace(/\/\*/g, '/ *').replace(/\?\?/g, '? ?');
}

/** A C string literal: printable ASCII as is (escaping `"`, `\` and `?`), everything else as octal UTF-8 bytes. */
export function toCString(text: string): string {
  let s = '"';
  for (const b of new TextEncoder().encode(text)) {
    if (b === 0x22 || b === 0x5c || b === 0x3f) s += `\\${String.fromCharCode(b)}`;
    else if (b >= 0x20 && b < 0x7f) s += String.fromCharCode(b);
    else s += `\\${b.toString(8).padStart(3, '0')}`;
  }
  return `${s}"`;
}

/** A Rust string literal (UTF-8 kept, `"` and `\` escaped, control and direction characters as `\u{..}`). */
export function toRustString(text: string): string {
  let s = '"';
  for (const ch of text) {
    const code = ch.codePointAt(0)!;
    if (ch === '"' || ch === '\\') s += `\\${ch}`;
    else if (isUnsafeChar(ch)) s += `\\u{${code.toString(16)}}`;
    else s += ch;
  }
  return `${s}"`;
}

/** A Markdown code span holding `text` on one line (fence longer than any backtick run inside). */
export function toCodeSpan(raw: string): string {
  const text = toCommentLine(raw);
  const longest = Math.max(0, ...(text.match(/`+/g) ?? []).map((r) => r.length));
  const fence = '`'.repeat(longest + 1);
  const pad = text.startsWith('`') || text.endsWith('`') || (text.startsWith(' ') && text.endsWith(' ')) ? ' ' : '';
  return `${fence}${pad}${text}${pad}${fence}`;
}

/** Markdown text with its special characters escaped. */
export function toMarkdownText(text: string): string {
  // `_` only needs escaping where it could open or close emphasis: not inside a word
  return text
    .replace(/\r\n?/g, '\n')
    .replace(UNSAFE_IN_TEXT, (ch) => (ch === '\n' || ch === '\t' ? ch : `\\u{${ch.codePointAt(0)!.toString(16)}}`))
    .replace(/([\\`*{}[\]<>#|~])/g, '\\$1')
    .replace(/(^|[^A-Za-z0-9])_|_(?=[^A-Za-z0-9]|$)/g, (m) => m.replace('_', '\\_'));
}

const TOML_SHORT_ESCAPES: Record<string, string> = { '\b': '\\b', '\t': '\\t', '\n': '\\n', '\f': '\\f', '\r': '\\r' };

/** A TOML basic string: control and direction characters as `\uXXXX`, a lone surrogate (no TOML spelling) as U+FFFD. */
export function toTomlString(text: string): string {
  let s = '"';
  for (const ch of text) {
    const code = ch.codePointAt(0)!;
    if (ch === '"' || ch === '\\') s += `\\${ch}`;
    else if (TOML_SHORT_ESCAPES[ch]) s += TOML_SHORT_ESCAPES[ch];
    else if (isUnsafeChar(ch)) s += `\\u${code.toString(16).padStart(4, '0')}`;
    else if (code >= 0xd800 && code <= 0xdfff) s += '\\uFFFD';
    else s += ch;
  }
  return `${s}"`;
}

/** Templates per target, in the order they are rendered, with the path of the file each produces. */
export const TEMPLATES = {
  c: ['c/machine.h', 'c/machine.c', 'c/test.c', 'c/replay.c', 'c/Makefile', 'c/README.md'],
  rust: ['rust/Cargo.toml', 'rust/lib.rs', 'rust/replay.rs', 'rust/README.md'],
} as const;

/** A template name, `<target>/<file>`. */
export type TemplateId = (typeof TEMPLATES)[keyof typeof TEMPLATES][number];

/** The context type each template is rendered with. */
export type TemplateContext<K extends TemplateId> = K extends `c/${string}` ? CContext : RustContext;

function createEnvironment(): typeof Handlebars {
  const hb = Handlebars.create();
  hb.registerHelper('cComment', (text: unknown) => toCComment(String(text)));
  hb.registerHelper('cString', (text: unknown) => toCString(String(text)));
  hb.registerHelper('rustString', (text: unknown) => toRustString(String(text)));
  hb.registerHelper('docText', (text: unknown) => toCodeSpan(String(text)));
  hb.registerHelper('mdCode', (text: unknown) => toCodeSpan(String(text)));
  hb.registerHelper('mdText', (text: unknown) => toMarkdownText(String(text)));
  hb.registerHelper('tomlString', (text: unknown) => toTomlString(String(text)));
  for (const [path, source] of Object.entries(TEMPLATE_SOURCES)) {
    const m = /^([a-z]+)\/partials\/(.+)\.hbs$/.exec(path);
    if (m) hb.registerPartial(`${m[1]}/${m[2]}`, source);
  }
  return hb;
}

let environment: typeof Handlebars | undefined;
const compiled = new Map<string, Handlebars.TemplateDelegate>();

/** Renders one template with its typed context (raw text; run `finishText` on the result). */
export function renderTemplate<K extends TemplateId>(id: K, context: TemplateContext<K>): string {
  environment ??= createEnvironment();
  let fn = compiled.get(id);
  if (!fn) {
    const source = TEMPLATE_SOURCES[`${id}.hbs`];
    if (source === undefined) throw new Error(`template ${id}.hbs is missing from template-sources.ts`);
    fn = environment.compile(source, { noEscape: true, strict: true, preventIndent: true });
    compiled.set(id, fn);
  }
  return fn(context);
}
