/**
 * Identifier rules: any state, input or output name becomes a valid, readable C and Rust
 * identifier, deterministically. Names are split into ASCII words (common Latin letters are
 * transliterated, other characters become `u<hex>` words), styled per target, cut to a length
 * every C compiler keeps distinct, and collisions are resolved with numeric suffixes in
 * declaration order. The resulting map is recorded in the bundle manifest.
 */
import type { FlowTable } from '../engine/model';

/** C99 and C11 keywords. */
export const C_KEYWORDS: ReadonlySet<string> = new Set([
  'auto', 'break', 'case', 'char', 'const', 'continue', 'default', 'do', 'double', 'else', 'enum', 'extern',
  'float', 'for', 'goto', 'if', 'inline', 'int', 'long', 'register', 'restrict', 'return', 'short', 'signed',
  'sizeof', 'static', 'struct', 'switch', 'typedef', 'union', 'unsigned', 'void', 'volatile', 'while',
  '_Bool', '_Complex', '_Imaginary', '_Alignas', '_Alignof', '_Atomic', '_Generic', '_Noreturn',
  '_Static_assert', '_Thread_local',
]);

/** Macros and typedefs of the standard headers that a bare lower-case identifier could meet. */
export const C_COMMON_MACROS: ReadonlySet<string> = new Set([
  'bool', 'true', 'false', 'alignas', 'alignof', 'noreturn', 'static_assert', 'thread_local', 'complex',
  'imaginary', 'assert', 'errno', 'offsetof', 'stdin', 'stdout', 'stderr', 'main', 'setjmp', 'va_arg',
  'va_start', 'va_end', 'va_copy', 'size_t', 'ptrdiff_t', 'wchar_t', 'null', 'eof',
  // standard header names, so `<prefix>.h` never shadows one
  'stdio', 'stdlib', 'string', 'stdint', 'stddef', 'stdbool', 'stdarg', 'limits', 'float', 'math', 'time',
  'ctype', 'locale', 'signal', 'inttypes', 'iso646', 'wchar', 'wctype', 'fenv', 'tgmath', 'stdalign',
  'stdatomic', 'stdnoreturn', 'threads', 'uchar',
]);

/** Rust strict and reserved keywords (2015 to 2021 editions), plus names a crate may not take. */
export const RUST_KEYWORDS: ReadonlySet<string> = new Set([
  'as', 'break', 'const', 'continue', 'crate', 'else', 'enum', 'extern', 'false', 'fn', 'for', 'if', 'impl',
  'in', 'let', 'loop', 'match', 'mod', 'move', 'mut', 'pub', 'ref', 'return', 'self', 'Self', 'static',
  'struct', 'super', 'trait', 'true', 'type', 'unsafe', 'use', 'where', 'while', 'async', 'await', 'dyn',
  'abstract', 'become', 'box', 'do', 'final', 'macro', 'override', 'priv', 'typeof', 'unsized', 'virtual',
  'yield', 'try', 'gen', 'union',
]);

/** Crate names that would shadow a built-in crate. */
const RUST_RESERVED_CRATES: ReadonlySet<string> = new Set(['core', 'std', 'alloc', 'test', 'proc_macro']);

/** Longest identifier generated; C99 guarantees 63 significant initial characters. */
export const MAX_IDENTIFIER = 63;

/** Transliterations of common Latin letters that do not decompose under NFD. */
const LATIN: Record<string, string> = {
  ß: 'ss', æ: 'ae', Æ: 'AE', ø: 'o', Ø: 'O', œ: 'oe', Œ: 'OE', þ: 'th', Þ: 'TH', ð: 'd', Ð: 'D',
  ł: 'l', Ł: 'L', đ: 'd', Đ: 'D', ı: 'i', ħ: 'h', Ħ: 'H', ŋ: 'ng', Ŋ: 'NG', ĸ: 'q', ſ: 's',
};

/**
 * Splits a name into ASCII words: separators are any ASCII punctuation or space, case changes
 * (`doorClosed`, `HTTPServer`) start a new word, common Latin letters are transliterated, and
 * any other character becomes its own word `u<hex>`.
 */
export function nameToWords(name: string): string[] {
  let ascii = '';
  for (const ch of name) {
    const code = ch.codePointAt(0)!;
    if (code < 128) {
      ascii += /[A-Za-z0-9]/.test(ch) ? ch : ' ';
      continue;
    }
    const mapped = LATIN[ch];
    if (mapped !== undefined) {
      ascii += mapped;
      continue;
    }
    const stripped = ch.normalize('NFD').replace(/[\u0300-\u036f]/g, '');
    if (/^[A-Za-z]+$/.test(stripped)) ascii += stripped;
    else ascii += ` u${code.toString(16)} `;
  }
  const words: string[] = [];
  for (const chunk of ascii.split(' ')) {
    if (!chunk) continue;
    // split lower->Upper and ACRONYMWord boundaries; digits stay attached to their word
    const parts = chunk.replace(/([a-z0-9])([A-Z])/g, '$1 $2').replace(/([A-Z]+)([A-Z][a-z])/g, '$1 $2').split(' ');
    for (const p of parts) if (p) words.push(p);
  }
  // a name of punctuation only (`+`, `->`) still needs a readable, distinct spelling
  if (words.length === 0) for (const ch of name) words.push(`u${ch.codePointAt(0)!.toString(16)}`);
  return words;
}

/** Words joined as lower snake case (`door_closed`). */
export function wordsToSnake(words: string[]): string {
  return words.map((w) => w.toLowerCase()).join('_');
}

/** Words joined as SCREAMING snake case (`DOOR_CLOSED`). */
export function wordsToScreaming(words: string[]): string {
  return words.map((w) => w.toUpperCase()).join('_');
}

/** Words joined as UpperCamelCase (`DoorClosed`); digits are kept as they are. */
export function wordsToCamel(words: string[]): string {
  return words.map((w) => w.charAt(0).toUpperCase() + w.slice(1).toLowerCase()).join('');
}

/** Cuts an identifier part to `max` characters without leaving a trailing underscore. */
function cut(s: string, max: number): string {
  return s.length <= max ? s : s.slice(0, max).replace(/_+$/, '');
}

/** Resolves collisions in declaration order: unique bases are kept, later duplicates get `sep + n`. */
export function resolveCollisions(bases: string[], sep: string, taken: ReadonlySet<string> = new Set()): string[] {
  const counts = new Map<string, number>();
  for (const b of bases) counts.set(b, (counts.get(b) ?? 0) + 1);
  const used = new Set<string>(taken);
  const out: (string | undefined)[] = bases.map(() => undefined);
  // first pass: every base that nobody else wants, and the first claimant of each shared base
  const claimed = new Set<string>();
  bases.forEach((b, i) => {
    if (used.has(b) || claimed.has(b)) return;
    claimed.add(b);
    out[i] = b;
  });
  for (const b of claimed) used.add(b);
  // second pass: the rest, numbered from 2, skipping anything already in use
  bases.forEach((b, i) => {
    if (out[i] !== undefined) return;
    for (let n = 2; ; n++) {
      const candidate = `${b}${sep}${n}`;
      if (!used.has(candidate)) {
        used.add(candidate);
        out[i] = candidate;
        return;
      }
    }
  });
  return out as string[];
}

/** One name and the identifiers it became. */
export interface IdentifierEntry {
  /** The original name. */
  name: string;
  /** The C macro (`DOOR_STATE_IDLE`, `DOOR_IN_KEY`, `DOOR_OUT_UNLOCK`). */
  c: string;
  /** The Rust identifier (`State::Idle` variant `Idle`, constants `IN_KEY`, `OUT_UNLOCK`). */
  rust: string;
}

/** Every identifier a bundle uses for the table's names. */
export interface IdentifierMap {
  /** Lower-case C prefix (file names, functions, types). */
  prefix: string;
  /** Upper-case C macro prefix. */
  macroPrefix: string;
  /** Rust crate name (same as the prefix). */
  crate: string;
  /** The prefix as asked for, when it had to be changed. */
  requestedPrefix?: string;
  states: IdentifierEntry[];
  inputs: IdentifierEntry[];
  outputs: IdentifierEntry[];
}

/** A prefix from any name: lower snake case, starting with a letter, at most 32 characters. */
export function nameToPrefix(name: string): string {
  let s = wordsToSnake(nameToWords(name));
  if (!s) s = 'controller';
  if (!/^[a-z]/.test(s)) s = `ctl_${s}`;
  return cut(s, 32);
}

/** True when a prefix cannot be used as is in both targets (keyword, header name, built-in crate). */
export function isReservedPrefix(prefix: string): boolean {
  return C_KEYWORDS.has(prefix) || C_COMMON_MACROS.has(prefix) || RUST_KEYWORDS.has(prefix) || RUST_RESERVED_CRATES.has(prefix) || prefix === 'replay';
}

/** Makes a valid prefix usable in both targets: reserved words get `_ctl` appended. */
export function resolvePrefix(prefix: string): string {
  return isReservedPrefix(prefix) ? `${cut(prefix, 28)}_ctl` : prefix;
}

/** Builds the identifier map of a table for a (valid, lower snake case) prefix. */
export function buildIdentifiers(t: Pick<FlowTable, 'states' | 'inputs' | 'outputs'>, requested: string): IdentifierMap {
  const prefix = resolvePrefix(requested);
  const macroPrefix = prefix.toUpperCase();
  const group = (names: string[], cTag: string, rustTag: string | null): IdentifierEntry[] => {
    const words = names.map(nameToWords);
    const cHead = `${macroPrefix}_${cTag}_`;
    const cBases = words.map((w) => cut(wordsToScreaming(w), MAX_IDENTIFIER - cHead.length - 4));
    const c = resolveCollisions(cBases, '_').map((b) => cHead + b);
    let rust: string[];
    if (rustTag === null) {
      // enum variants: UpperCamelCase, never a leading digit, never `Self`
      const bases = words.map((w) => {
        let v = cut(wordsToCamel(w), MAX_IDENTIFIER - 9);
        if (/^[0-9]/.test(v)) v = `S${v}`;
        // `Self` is the one keyword UpperCamelCase can produce; the others are listed for safety
        if (RUST_KEYWORDS.has(v)) v = `${v}State`;
        return v;
      });
      rust = resolveCollisions(bases, '', RUST_KEYWORDS);
    } else {
      const head = `${rustTag}_`;
      rust = resolveCollisions(words.map((w) => cut(wordsToScreaming(w), MAX_IDENTIFIER - head.length - 4)), '_').map((b) => head + b);
    }
    return names.map((name, i) => ({ name, c: c[i]!, rust: rust[i]! }));
  };
  return {
    prefix,
    macroPrefix,
    crate: prefix,
    ...(prefix !== requested ? { requestedPrefix: requested } : {}),
    states: group(t.states, 'STATE', null),
    inputs: group(t.inputs, 'IN', 'IN'),
    outputs: group(t.outputs, 'OUT', 'OUT'),
  };
}
