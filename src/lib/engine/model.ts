/**
 * The FlowTable model: the zod schema of the JSON interchange format (version 1)
 * and the typed-array form every engine pass works on.
 */
import { z } from 'zod';

/** Limits that every import and edit path enforces. */
export const LIMITS = { inputs: 12, outputs: 32, states: 1024, nameLength: 64 } as const;

/** Marker for an unspecified next state in `FlowTable.next`. */
export const NONE = -1;

/** Double-change policies (see DESIGN.md §5); `guarded` is the default. */
export const DOUBLE_CHANGE_POLICIES = ['guarded', 'fault', 'stepwise', 'direct'] as const;

/** Schema of a double-change policy name. */
export const doubleChangePolicySchema = z.enum(DOUBLE_CHANGE_POLICIES);

/** What firmware does when more than one input bit changed between two snapshots. */
export type DoubleChangePolicy = z.infer<typeof doubleChangePolicySchema>;

/** Controller settings carried with the table. */
export const settingsSchema = z
  .object({
    doubleChange: doubleChangePolicySchema.default('guarded'),
    prefix: z
      .string()
      .regex(/^[a-z][a-z0-9_]{0,31}$/, 'a prefix is 1 to 32 characters: a lowercase letter, then lowercase letters, digits or _')
      .optional(),
  })
  .strict();

/** Settings of one table, defaults applied. */
export type Settings = z.infer<typeof settingsSchema>;

/** A named input sequence kept with the table; the first vector is the power-up snapshot. */
export const scenarioSchema = z
  .object({
    name: z.string().min(1).max(LIMITS.nameLength),
    inputs: z.array(z.string().regex(/^[01]*$/, 'an input vector is a string of 0 and 1')).min(1).max(10000),
  })
  .strict();

/** A saved simulator run. */
export type Scenario = z.infer<typeof scenarioSchema>;

/** The rule every state, input and output name follows, as error messages state it. */
export const NAME_RULES = 'names are 1 to 64 characters with no "/", no control, invisible or text-direction characters and no leading or trailing space';

/**
 * Characters that must never stand raw in text people review or compilers read, as the body of a
 * regular-expression character class: control characters (C0, DEL, C1), line and paragraph
 * separators, text-direction controls and the byte-order mark. Generated code escapes them in
 * free text; names refuse them outright.
 */
export const HIDDEN_TEXT_CHARACTERS = '\\u0000-\\u001f\\u007f-\\u009f\\u061c\\u200e\\u200f\\u2028-\\u202e\\u2066-\\u2069\\ufeff';

// Names refuse those, and also "/", U+FFFD, invisible fillers and tags, and lone surrogates: a
// direction override can make generated code and the review screens read differently from what
// they are (rustc refuses them in comments and strings), an invisible character makes two names
// look alike, and a lone surrogate cannot be stored as JSON. ZWJ and ZWNJ stay: scripts need them.
const FORBIDDEN_IN_NAMES = new RegExp(`[${HIDDEN_TEXT_CHARACTERS}\\u00ad\\u115f\\u1160\\u180e\\u200b\\u2060-\\u2064\\u3164\\uffa0\\ufff9-\\ufffb\\ufffd\\u{e0000}-\\u{e007f}\\ud800-\\udfff/]`, 'u');

// `__proto__` would silently vanish as an object key, and U+FFFD is what undecodable bytes become.
const RESERVED_NAMES = new Set(['__proto__']);

/** Schema of one state, input or output name. */
export const nameSchema = z
  .string()
  .min(1, NAME_RULES)
  .max(LIMITS.nameLength, NAME_RULES)
  .refine((s) => !FORBIDDEN_IN_NAMES.test(s) && s.trim() === s, NAME_RULES)
  .refine((s) => !RESERVED_NAMES.has(s), (s) => ({ message: `"${s}" is reserved and cannot be a name` }));

/** The JSON interchange document, version 1 (DESIGN.md §4). */
export const interchangeSchema = z
  .object({
    format: z.literal('quiesce-flow-table'),
    version: z.literal(1),
    name: nameSchema,
    description: z.string().max(4000).optional(),
    inputs: z.array(nameSchema).max(LIMITS.inputs, `at most ${LIMITS.inputs} inputs`),
    outputs: z.array(nameSchema).max(LIMITS.outputs, `at most ${LIMITS.outputs} outputs`),
    states: z.array(nameSchema).min(1, 'a table needs at least one state').max(LIMITS.states, `at most ${LIMITS.states} states`),
    reset: nameSchema,
    rows: z.record(z.string(), z.record(z.string(), z.string())),
    settings: settingsSchema.optional(),
    scenarios: z.array(scenarioSchema).max(200).optional(),
  })
  .strict();

/** A parsed interchange document. */
export type Interchange = z.infer<typeof interchangeSchema>;

/**
 * The engine's working form. Cells are indexed `state * columns + column`, where bit k
 * of a column index is the value of `inputs[k]` (so flipping input k is `column ^ (1 << k)`).
 */
export interface FlowTable {
  name: string;
  description?: string;
  inputs: string[];
  outputs: string[];
  states: string[];
  reset: number;
  /** Next state of each cell, or NONE. */
  next: Int16Array;
  /** Bit k set: output k is specified in the cell. */
  outCare: Uint32Array;
  /** Bit k: value of output k where specified (0 where not). */
  outValue: Uint32Array;
  settings: Settings;
  scenarios: Scenario[];
}

/** One place in a table, by names: the unit every finding, path and diff speaks in. */
export interface CellRef {
  state: string;
  inputs: string;
}

/** A located problem with an input document. */
export interface EngineIssue {
  /** JSON-path-like place, e.g. `rows.armed["11"]` or `3:14` for text sources. */
  where: string;
  message: string;
  hint?: string;
  line?: number;
  column?: number;
}

/** Thrown by every parser and validator with all problems found, each located. */
export class FlowTableError extends Error {
  readonly issues: EngineIssue[];
  constructor(issues: EngineIssue[]) {
    super(issues.map((i) => `${i.where}: ${i.message}${i.hint ? ` (hint: ${i.hint})` : ''}`).join('\n'));
    this.name = 'FlowTableError';
    this.issues = issues;
  }
}

/** Number of columns of a table with `inputCount` inputs. */
export function countColumns(inputCount: number): number {
  return 1 << inputCount;
}

/** Column key (character k is inputs[k]) to column index. */
export function keyToColumn(key: string): number {
  let c = 0;
  for (let k = 0; k < key.length; k++) if (key.charCodeAt(k) === 49) c |= 1 << k;
  return c;
}

/** Column index to its column key of `inputCount` characters. */
export function columnToKey(column: number, inputCount: number): string {
  let s = '';
  for (let k = 0; k < inputCount; k++) s += (column >> k) & 1 ? '1' : '0';
  return s;
}

/** Column keys in Gray-code order (reading a key left to right as a binary number), the grid's layout. */
export function grayKeys(inputCount: number): string[] {
  const keys: string[] = [];
  for (let i = 0; i < 1 << inputCount; i++) {
    const g = i ^ (i >> 1);
    keys.push(g.toString(2).padStart(inputCount, '0').slice(-inputCount || undefined) || '');
  }
  return inputCount === 0 ? [''] : keys;
}

/** Output bits of a cell as a string over `0 1 -`, one character per output. */
export function cellBits(t: FlowTable, cell: number): string {
  const care = t.outCare[cell]!;
  const val = t.outValue[cell]!;
  let s = '';
  for (let k = 0; k < t.outputs.length; k++) s += (care >>> k) & 1 ? ((val >>> k) & 1 ? '1' : '0') : '-';
  return s;
}

/** A cell as interchange text: `-`, `NEXT` or `NEXT/BITS`. */
export function cellToText(t: FlowTable, cell: number): string {
  const n = t.next[cell]!;
  if (n === NONE) return '-';
  return t.outputs.length === 0 ? t.states[n]! : `${t.states[n]}/${cellBits(t, cell)}`;
}

/** An empty table (every cell unspecified) with the given names. */
export function createTable(init: {
  name: string;
  inputs: string[];
  outputs: string[];
  states: string[];
  reset?: number;
  description?: string;
  settings?: Partial<Settings>;
  scenarios?: Scenario[];
}): FlowTable {
  const cells = init.states.length * countColumns(init.inputs.length);
  return {
    name: init.name,
    ...(init.description !== undefined ? { description: init.description } : {}),
    inputs: [...init.inputs],
    outputs: [...init.outputs],
    states: [...init.states],
    reset: init.reset ?? 0,
    next: new Int16Array(cells).fill(NONE),
    outCare: new Uint32Array(cells),
    outValue: new Uint32Array(cells),
    settings: settingsSchema.parse(init.settings ?? {}),
    scenarios: init.scenarios ? init.scenarios.map((s) => ({ name: s.name, inputs: [...s.inputs] })) : [],
  };
}

/** Deep copy of a table. */
export function cloneTable(t: FlowTable): FlowTable {
  return {
    ...t,
    inputs: [...t.inputs],
    outputs: [...t.outputs],
    states: [...t.states],
    next: t.next.slice(),
    outCare: t.outCare.slice(),
    outValue: t.outValue.slice(),
    settings: { ...t.settings },
    scenarios: t.scenarios.map((s) => ({ name: s.name, inputs: [...s.inputs] })),
  };
}

function quoteKey(k: string): string {
  return /^[A-Za-z_][A-Za-z0-9_]*$/.test(k) ? `.${k}` : `[${JSON.stringify(k)}]`;
}

function zodPathToWhere(path: (string | number)[]): string {
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s === '' ? p : quoteKey(p);
  return s || '(document)';
}

function checkUnique(names: string[], field: string, issues: EngineIssue[]): void {
  const seen = new Map<string, number>();
  names.forEach((n, i) => {
    if (seen.has(n)) issues.push({ where: `${field}[${i}]`, message: `duplicate name "${n}"`, hint: `first used at ${field}[${seen.get(n)}]` });
    else seen.set(n, i);
  });
}

/** Validates names, cells and limits of a parsed document; returns located issues (empty when valid). */
function checkInterchange(doc: Interchange): EngineIssue[] {
  const issues: EngineIssue[] = [];
  checkUnique(doc.inputs, 'inputs', issues);
  checkUnique(doc.outputs, 'outputs', issues);
  checkUnique(doc.states, 'states', issues);
  const states = new Set(doc.states);
  if (states.has('-')) issues.push({ where: `states[${doc.states.indexOf('-')}]`, message: 'a state cannot be named "-"', hint: '"-" marks an unspecified cell' });
  if (!states.has(doc.reset)) issues.push({ where: 'reset', message: `unknown state "${doc.reset}"`, hint: `declare it in states, or use one of: ${doc.states.slice(0, 5).join(', ')}` });
  const n = doc.inputs.length;
  const m = doc.outputs.length;
  const keyRe = new RegExp(`^[01]{${n}}$`);
  for (const [row, cols] of Object.entries(doc.rows)) {
    if (!states.has(row)) {
      issues.push({ where: `rows${quoteKey(row)}`, message: `unknown state "${row}"`, hint: 'every row must be listed in states' });
      continue;
    }
    for (const [key, cell] of Object.entries(cols)) {
      const where = `rows${quoteKey(row)}[${JSON.stringify(key)}]`;
      if (!keyRe.test(key)) {
        issues.push({ where, message: `column key "${key}" is not ${n} characters of 0 and 1`, hint: `one character per input, in the order ${doc.inputs.join(' ')}` });
        continue;
      }
      if (cell === '-') continue;
      const slash = cell.lastIndexOf('/');
      const next = m === 0 || slash < 0 ? cell : cell.slice(0, slash);
      const bits = m === 0 || slash < 0 ? null : cell.slice(slash + 1);
      if (m === 0 && slash >= 0) {
        issues.push({ where, message: `cell "${cell}" has output bits but the table has no outputs` });
        continue;
      }
      if (!states.has(next)) issues.push({ where, message: `unknown state "${next}"`, hint: nearestName(next, doc.states) });
      if (bits !== null && !new RegExp(`^[01-]{${m}}$`).test(bits))
        issues.push({ where, message: `output bits "${bits}" are not ${m} characters of 0, 1 and -`, hint: `one character per output, in the order ${doc.outputs.join(' ')}` });
    }
  }
  return issues;
}

/** A "did you mean" hint for an unknown name, by edit distance. */
export function nearestName(name: string, candidates: string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    const d = editDistance(name, c);
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return best !== undefined && bestD <= Math.max(2, Math.floor(name.length / 3)) ? `did you mean "${best}"?` : undefined;
}

function editDistance(a: string, b: string): number {
  const dp = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let prev = dp[0]!;
    dp[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = dp[j]!;
      dp[j] = Math.min(dp[j]! + 1, dp[j - 1]! + 1, prev + (a[i - 1] === b[j - 1] ? 0 : 1));
      prev = tmp;
    }
  }
  return dp[b.length]!;
}

/** Parses and validates an unknown value as an interchange document; throws FlowTableError with every located issue. */
export function parseInterchange(value: unknown): Interchange {
  const r = interchangeSchema.safeParse(value);
  if (!r.success) {
    throw new FlowTableError(
      r.error.issues.map((i) => ({
        where: zodPathToWhere(i.path),
        message: i.code === 'unrecognized_keys' ? `unknown field${i.keys.length > 1 ? 's' : ''} ${i.keys.map((k) => `"${k}"`).join(', ')}` : i.message,
      })),
    );
  }
  const issues = checkInterchange(r.data);
  if (issues.length) throw new FlowTableError(issues);
  return r.data;
}

/** Interchange document to the typed-array working form (validates first). */
export function interchangeToTable(value: unknown): FlowTable {
  const doc = parseInterchange(value);
  const index = new Map(doc.states.map((s, i) => [s, i] as const));
  const t = createTable({
    name: doc.name,
    inputs: doc.inputs,
    outputs: doc.outputs,
    states: doc.states,
    reset: index.get(doc.reset)!,
    ...(doc.description !== undefined ? { description: doc.description } : {}),
    ...(doc.settings ? { settings: doc.settings } : {}),
    ...(doc.scenarios ? { scenarios: doc.scenarios } : {}),
  });
  const cols = countColumns(doc.inputs.length);
  const m = doc.outputs.length;
  for (const [row, cells] of Object.entries(doc.rows)) {
    const s = index.get(row)!;
    for (const [key, text] of Object.entries(cells)) {
      if (text === '-') continue;
      const cell = s * cols + keyToColumn(key);
      const slash = m === 0 ? -1 : text.lastIndexOf('/');
      t.next[cell] = index.get(slash < 0 ? text : text.slice(0, slash))!;
      if (slash >= 0) setCellBits(t, cell, text.slice(slash + 1));
    }
  }
  return t;
}

/** Sets a cell's outputs from a string over `0 1 -`. */
export function setCellBits(t: FlowTable, cell: number, bits: string): void {
  let care = 0;
  let val = 0;
  for (let k = 0; k < bits.length; k++) {
    const ch = bits[k];
    if (ch === '0') care |= 1 << k;
    else if (ch === '1') {
      care |= 1 << k;
      val |= 1 << k;
    }
  }
  t.outCare[cell] = care >>> 0;
  t.outValue[cell] = val >>> 0;
}

/**
 * Working form to interchange document. Rows list every state; columns are in Gray order
 * and unspecified cells are omitted, so the output is canonical.
 */
export function tableToInterchange(t: FlowTable): Interchange {
  const cols = countColumns(t.inputs.length);
  const order = grayKeys(t.inputs.length);
  const rows: Record<string, Record<string, string>> = {};
  t.states.forEach((s, si) => {
    const row: Record<string, string> = {};
    for (const key of order) {
      const cell = si * cols + keyToColumn(key);
      if (t.next[cell] !== NONE) row[key] = cellToText(t, cell);
    }
    rows[s] = row;
  });
  const settings: Settings = { doubleChange: t.settings.doubleChange, ...(t.settings.prefix ? { prefix: t.settings.prefix } : {}) };
  return {
    format: 'quiesce-flow-table',
    version: 1,
    name: t.name,
    ...(t.description !== undefined ? { description: t.description } : {}),
    inputs: [...t.inputs],
    outputs: [...t.outputs],
    states: [...t.states],
    reset: t.states[t.reset]!,
    rows,
    settings,
    ...(t.scenarios.length ? { scenarios: t.scenarios.map((s) => ({ name: s.name, inputs: [...s.inputs] })) } : {}),
  };
}

/** True when two tables have the same names, settings and cells. */
export function tablesEqual(a: FlowTable, b: FlowTable): boolean {
  return JSON.stringify(tableToInterchange(a)) === JSON.stringify(tableToInterchange(b));
}
