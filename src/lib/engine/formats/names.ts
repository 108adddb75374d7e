/** Name rules shared by the source formats: when a name may be written bare, and name checks. */
import { nameSchema } from '../model';

/** Statement keywords of the `.qfl` text format; a name equal to one is always quoted. */
export const TEXT_KEYWORDS = ['flow', 'about', 'inputs', 'outputs', 'states', 'reset', 'double-change', 'prefix', 'scenario', 'grid', 'cells'] as const;

const KEYWORD_SET = new Set<string>(TEXT_KEYWORDS);

/** Names that may be written without quotes (a bare `-` never is a name: it marks an unspecified cell). */
export const BARE_NAME = /^[\p{L}\p{N}_][\p{L}\p{N}_.\-]*$/u;

/** True when `name` can be written bare in a `.qfl` source. */
export function isBareName(name: string): boolean {
  return BARE_NAME.test(name) && !KEYWORD_SET.has(name);
}

/** True when `word` is a `.qfl` statement keyword. */
export function isKeyword(word: string): boolean {
  return KEYWORD_SET.has(word);
}

/**
 * A JSON string literal that also escapes U+FFFD (which the source check reads as a sign of
 * binary data), the byte-order mark and the Unicode line separators.
 */
export function quoteString(s: string): string {
  return JSON.stringify(s).replace(/[\ufffd\ufeff\u2028\u2029]/g, (c) => `\\u${c.charCodeAt(0).toString(16)}`);
}

/** A name as `.qfl` writes it: bare when allowed, otherwise a JSON string. */
export function formatName(name: string): string {
  return isBareName(name) ? name : quoteString(name);
}

const checked = new Map<string, string | undefined>();

/** Why a name breaks the model's name rules, or undefined when it is valid. */
export function checkName(name: string): string | undefined {
  // sources repeat the same names on every row; the schema check is the costly part
  if (checked.has(name)) return checked.get(name);
  const r = nameSchema.safeParse(name);
  const why = r.success ? undefined : (r.error.issues[0]?.message ?? 'invalid name');
  if (checked.size > 4096) checked.clear();
  checked.set(name, why);
  return why;
}

/** "1 cell", "3 cells". */
export function pluralize(n: number, word: string, many = `${word}s`): string {
  return `${n} ${n === 1 ? word : many}`;
}
