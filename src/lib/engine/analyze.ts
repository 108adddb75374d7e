/**
 * Analysis of a flow table under the engine contract (issue: "Analysis: semantics"): stable total
 * states, power-up, reachability under single-input changes (SIC), and findings with drawable paths.
 *
 * Cost: one linear settling pass (reachability.ts), one pass over the reachable stable total states
 * times the inputs (SIC checks are O(1) each from the per-cell summaries), and one pass times the
 * input pairs for double changes. Strings are only built for listed findings, and listed findings
 * share what they can (see createPathMaker): one step object per cell and role, one traced path per
 * single-input change. That keeps a findings-heavy table cheap both to analyze and to post from the
 * workbench's worker (structured cloning writes a shared object once).
 */
import { cellBits, columnToKey, countColumns, NONE, type CellRef, type FlowTable } from './model';
import { SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED } from './settle';
import {
  FINDINGS_PER_CODE,
  PATH_STEP_KINDS,
  SEVERITY_OF,
  rankCode,
  type Finding,
  type FindingCode,
  type Fix,
  type Outcome,
  type PathStep,
  type Severity,
} from './findings';
import { computeReach, listGrayColumns, rankGrayColumns, settleCells, type Reach } from './reachability';

// module-local copies: imported bindings can compile to getter calls, which hot loops should not pay for
const L_NONE: number = NONE;
const L_SETTLE_OK: number = SETTLE_OK;
const L_SETTLE_OSCILLATION: number = SETTLE_OSCILLATION;
const L_SETTLE_UNSPECIFIED: number = SETTLE_UNSPECIFIED;

/** How power-up went in one column. */
export interface PowerUpResult {
  inputs: string;
  result: 'stable' | 'unspecified' | 'oscillation';
  /** The settled state, or null when settling failed. */
  state: string | null;
  path: PathStep[];
}

/** Everything analysis reports about one table. */
export interface Analysis {
  /** Every stable total state of the table, by state then grid column order. */
  stable: CellRef[];
  /** States on any power-up or SIC path, transient ones included, in table order. */
  reachable: string[];
  /** Stable total states reached by power-up or SIC, by state then grid column order. */
  reachableStable: CellRef[];
  /** One entry per column, in grid order. */
  powerUp: PowerUpResult[];
  /**
   * Sorted by severity, then code, then place (state order, grid column order, input order). Paths
   * share step objects and arrays (within this analysis): treat them as read-only.
   */
  findings: Finding[];
  /** Problems per severity, including those past the per-code cap; `findings-truncated` notes are not counted. */
  counts: Record<Severity, number>;
}

/** Options of analyzeTable. */
export interface AnalyzeOptions {
  /** Most findings listed per code (default FINDINGS_PER_CODE). */
  limit?: number;
}

/** A traced settle path with its end. */
export interface SettleTrace {
  steps: PathStep[];
  end: 'stable' | 'unspecified' | 'oscillation';
  /** The stable or unspecified cell's state, or the repeated state of an oscillation. */
  state: number;
  /** Oscillation: the states on the loop, in visiting order. */
  cycle?: number[];
}

/** Traces settle paths of one table; see traceSettle. */
export type SettleTracer = (state: number, column: number, start?: { state: number; column: number }) => SettleTrace;

// roles of a path step, as indices into PATH_STEP_KINDS
const K_START = 0;
const K_TRANSIENT = 1;
const K_STABLE = 2;
const K_UNSPECIFIED = 3;
const K_REPEAT = 4;
const KIND_NAMES: readonly PathStep['kind'][] = PATH_STEP_KINDS;

/** A tracer plus its step maker: one step object per cell and role, shared by every path that passes there. */
interface PathMaker {
  trace: SettleTracer;
  /** The step of cell (s, c) in role `kind` (an index into PATH_STEP_KINDS). */
  step(s: number, c: number, kind: number): PathStep;
}

/** Builds the tracer of createTracer; `columnKeys` (every column's key) saves building them again. */
function createPathMaker(t: FlowTable, columnKeys?: string[]): PathMaker {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const ns = t.states.length;
  const names = t.states;
  const next = t.next;
  const keys: string[] = columnKeys ?? new Array<string>(cols);
  const made = new Map<number, PathStep>();
  const stamp = new Int32Array(ns);
  const pos = new Int32Array(ns);
  const order = new Int32Array(ns);
  let generation = 0;
  const step = (s: number, c: number, kind: number): PathStep => {
    const cell = s * cols + c;
    const id = cell * 5 + kind;
    let p = made.get(id);
    if (p === undefined) {
      const key = keys[c] ?? (keys[c] = columnToKey(c, n));
      p = { state: names[s]!, inputs: key, kind: KIND_NAMES[kind]!, outputs: cellBits(t, cell) };
      made.set(id, p);
    }
    return p;
  };
  const trace: SettleTracer = (state, column, start) => {
    if (++generation === 0x7fffffff) {
      stamp.fill(0);
      generation = 1;
    }
    const steps: PathStep[] = [];
    let role = K_START;
    if (start) {
      steps.push(step(start.state, start.column, K_START));
      role = K_TRANSIENT;
    }
    let len = 0;
    let s = state;
    for (;;) {
      const nx = next[s * cols + column]!;
      stamp[s] = generation;
      pos[s] = len;
      order[len++] = s;
      if (nx === L_NONE) {
        steps.push(step(s, column, K_UNSPECIFIED));
        return { steps, end: 'unspecified', state: s };
      }
      if (nx === s) {
        steps.push(step(s, column, K_STABLE));
        return { steps, end: 'stable', state: s };
      }
      steps.push(step(s, column, role));
      role = K_TRANSIENT;
      if (stamp[nx] === generation) {
        steps.push(step(nx, column, K_REPEAT));
        const cycle: number[] = [];
        for (let i = pos[nx]!; i < len; i++) cycle.push(order[i]!);
        return { steps, end: 'oscillation', state: nx, cycle };
      }
      s = nx;
    }
  };
  return { trace, step };
}

/**
 * A tracer for many paths of one table: it reuses its visit marks, caches column keys and makes
 * one step object per cell and role, so listing hundreds of findings stays cheap. Paths it returns
 * share step objects: treat them as read-only.
 */
export function createTracer(t: FlowTable): SettleTracer {
  return createPathMaker(t).trace;
}

/**
 * Traces settling of `state` in `column` as path steps. With `start` (a stable total state the
 * event begins in) the first step is that cell; without it the first cell is marked `start`
 * unless settling ends there.
 */
export function traceSettle(t: FlowTable, state: number, column: number, start?: { state: number; column: number }): SettleTrace {
  return createTracer(t)(state, column, start);
}

/** Lists names as `a`, `a and b`, `a, b and c`. */
function listNames(names: string[]): string {
  if (names.length <= 1) return names.join('');
  return `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

/** Findings of one code in generation order: the listed ones and how many there are in all. */
class CodeList {
  readonly listed: Finding[] = [];
  total = 0;
  readonly severity: Severity;
  constructor(readonly code: FindingCode) {
    this.severity = SEVERITY_OF[code];
  }
}

/** What the finding builders share within one analysis. */
interface Context {
  t: FlowTable;
  n: number;
  cols: number;
  names: string[];
  /** Column keys by column index. */
  keys: string[];
  paths: PathMaker;
  /** Settle path of the single-input change of input k from stable cell x (one trace per change). */
  traceChange(x: number, k: number): SettleTrace;
  /** Settle path from cell (s, c) without a start cell (one trace per cell). */
  traceFrom(s: number, c: number): SettleTrace;
  /** Per-state visit marks of listValuesAlong, and their generation. */
  seen: Int32Array;
  seenGeneration: number;
}

/** Analyzes a table: stable and reachable total states, power-up, and sorted findings. */
export function analyzeTable(t: FlowTable, options: AnalyzeOptions = {}): Analysis {
  const limit = Math.max(0, options.limit ?? FINDINGS_PER_CODE);
  const cells = settleCells(t);
  const reach = computeReach(t, cells);
  return buildAnalysis(t, reach, limit);
}

/** The builders' context, with its trace caches; `keys` holds every column's key. */
function createContext(t: FlowTable, keys: string[]): Context {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const paths = createPathMaker(t, keys);
  const trace = paths.trace;
  const changes = new Map<number, SettleTrace>();
  const froms = new Map<number, SettleTrace>();
  return {
    t,
    n,
    cols,
    names: t.states,
    keys,
    paths,
    traceChange: (x, k) => {
      const id = x * n + k;
      let tr = changes.get(id);
      if (tr === undefined) {
        const s = x >> n;
        const c = x & (cols - 1);
        tr = trace(s, c ^ (1 << k), { state: s, column: c });
        changes.set(id, tr);
      }
      return tr;
    },
    traceFrom: (s, c) => {
      const id = s * cols + c;
      let tr = froms.get(id);
      if (tr === undefined) {
        tr = trace(s, c);
        froms.set(id, tr);
      }
      return tr;
    },
    seen: new Int32Array(t.states.length),
    seenGeneration: 0,
  };
}

function buildAnalysis(t: FlowTable, reach: Reach, limit: number): Analysis {
  const n = t.inputs.length;
  const m = t.outputs.length;
  const ns = t.states.length;
  const cols = reach.cells.columns;
  const { term, fault, state: settled, firstCare, firstValue, once, twice, risk } = reach.cells;
  const next = t.next;
  const outCare = t.outCare;
  const outValue = t.outValue;
  const names = t.states;
  const keys: string[] = [];
  for (let c = 0; c < cols; c++) keys.push(columnToKey(c, n));
  const gray = listGrayColumns(n);
  const rank = rankGrayColumns(n);
  const cx = createContext(t, keys);
  const lists: CodeList[] = [];
  const list = (code: FindingCode): CodeList => {
    const l = new CodeList(code);
    lists.push(l);
    return l;
  };
  const where = (s: number, c: number): string => `(${names[s]}, ${keys[c]})`;

  // stable total states, and rows without one
  const stable: CellRef[] = [];
  const reachableStable: CellRef[] = [];
  const ordered: number[] = [];
  const noStable = list('no-stable-state');
  for (let s = 0; s < ns; s++) {
    const base = s * cols;
    let any = false;
    for (let g = 0; g < cols; g++) {
      const c = gray[g]!;
      if (next[base + c] !== s) continue;
      any = true;
      const ref: CellRef = { state: names[s]!, inputs: keys[c]! };
      stable.push(ref);
      if (reach.reachStable[base + c]) {
        reachableStable.push(ref);
        ordered.push(base + c);
      }
    }
    if (!any && noStable.total++ < limit) {
      noStable.listed.push({ code: noStable.code, severity: noStable.severity, state: names[s]!, message: `Row ${names[s]} has no stable cell.`, path: [] });
    }
  }

  // first source of each failure place: >= 0 is an SIC (stable cell * n + bit), <= -2 a power-up column
  // (an unspecified cell and a cycle's representative cell are never the same cell)
  const source = new Int32Array(term.length).fill(-1);
  const hits = new Int32Array(term.length);
  const unspecCells: number[] = [];
  const oscCells: number[] = [];
  const noteFailure = (e: number, src: number): void => {
    const place = term[e]!;
    if (hits[place] === 0) {
      source[place] = src;
      (fault[e] === L_SETTLE_UNSPECIFIED ? unspecCells : oscCells).push(place);
    }
    hits[place] = hits[place]! + 1;
  };

  const powerUp: PowerUpResult[] = [];
  const powerUpUnspec = list('unspecified-power-up');
  for (let g = 0; g < cols; g++) {
    const c = gray[g]!;
    const cell = t.reset * cols + c;
    const tr = cx.traceFrom(t.reset, c);
    const f = fault[cell]!;
    powerUp.push({ inputs: keys[c]!, result: tr.end, state: f === L_SETTLE_OK ? names[term[cell]! >> n]! : null, path: tr.steps });
    if (f === L_SETTLE_OK) continue;
    if (f === L_SETTLE_OSCILLATION) noteFailure(cell, -2 - c);
    else if (powerUpUnspec.total++ < limit) {
      const u = term[cell]! >> n;
      powerUpUnspec.listed.push({
        code: powerUpUnspec.code,
        severity: powerUpUnspec.severity,
        inputs: keys[c]!,
        state: names[u]!,
        message: `Power-up with inputs ${keys[c]} reaches the unspecified cell ${where(u, c)}.`,
        path: tr.steps,
        fix: suggestCell(t, u, c, keys[c]!),
      });
    }
  }

  const glitches = list('output-glitch');
  const hazards = list('output-hazard');
  const doubles = list('order-dependent-double-change');
  const via = new Int32Array(Math.max(n, 1));
  for (let i = 0; i < ordered.length; i++) {
    const x = ordered[i]!;
    const s = x >> n;
    const base = s << n;
    const c = x - base;
    const care0 = outCare[x]!;
    const val0 = outValue[x]! & care0;
    for (let k = 0; k < n; k++) {
      const c2 = c ^ (1 << k);
      const e = base + c2;
      const f = fault[e]!;
      if (f !== L_SETTLE_OK) {
        via[k] = L_NONE;
        noteFailure(e, x * n + k);
        continue;
      }
      via[k] = settled[e]!;
      if (m === 0) continue;
      const fc = firstCare[e]!;
      const fv = firstValue[e]!;
      const onceE = once[e]!;
      const g = (twice[e]! | (care0 & fc & (val0 ^ fv) & onceE)) >>> 0;
      // set bits lowest first, that is output order
      for (let r = g | 0; r !== 0; r &= r - 1) {
        if (glitches.total++ < limit) glitches.listed.push(describeGlitch(cx, glitches, x, k, 31 - Math.clz32(r & -r)));
      }
      // same rule as computeEntryRisk, inlined
      const entry = next[e] !== s ? ~outCare[e]! & fc & (~care0 | ~(val0 ^ fv)) : 0;
      const h = (risk[e]! | entry) & ~g;
      for (let r = h | 0; r !== 0; r &= r - 1) {
        if (hazards.total++ < limit) hazards.listed.push(describeHazard(cx, hazards, x, k, 31 - Math.clz32(r & -r)));
      }
    }
    for (let a = 0; a < n; a++) {
      const va = via[a]!;
      for (let b = a + 1; b < n; b++) {
        const target = c ^ (1 << a) ^ (1 << b);
        const vb = via[b]!;
        const sd = settled[base + target]!;
        if (sd !== L_NONE && va !== L_NONE && vb !== L_NONE && settled[(va << n) | target] === sd && settled[(vb << n) | target] === sd) continue;
        if (doubles.total++ < limit) doubles.listed.push(describeDoubleChange(cx, doubles, x, a, b));
      }
    }
  }

  // unspecified transitions, one per unspecified cell, in state then grid column order
  const unspec = list('unspecified-transition');
  unspecCells.sort((p, q) => (p >> n) - (q >> n) || rank[p & (cols - 1)]! - rank[q & (cols - 1)]!);
  for (const u of unspecCells) {
    const src = source[u]!;
    if (src < 0) continue;
    if (unspec.total++ >= limit) continue;
    const us = u >> n;
    const uc = u & (cols - 1);
    const x = Math.floor(src / Math.max(n, 1));
    const k = src - x * n;
    const s = x >> n;
    const c = x & (cols - 1);
    const others = hits[u]! - 1;
    unspec.listed.push({
      code: unspec.code,
      severity: unspec.severity,
      state: names[us]!,
      inputs: keys[uc]!,
      message:
        `From stable ${where(s, c)}, changing ${t.inputs[k]} reaches the unspecified cell ${where(us, uc)}` +
        (others > 0 ? `, as ${others === 1 ? 'does 1 other single-input change' : `do ${others} other single-input changes`}.` : '.'),
      path: cx.traceChange(x, k).steps,
      fix: suggestCell(t, us, uc, keys[uc]!),
    });
  }

  // oscillations, one per (column, cycle), in grid column then state order
  const osc = list('oscillation');
  oscCells.sort((p, q) => rank[p & (cols - 1)]! - rank[q & (cols - 1)]! || (p >> n) - (q >> n));
  for (const rep of oscCells) {
    if (osc.total++ >= limit) continue;
    const src = source[rep]!;
    const c2 = rep & (cols - 1);
    let tr: SettleTrace;
    let how: string;
    if (src <= -2) {
      tr = cx.traceFrom(t.reset, c2);
      how = 'at power-up';
    } else {
      const x = Math.floor(src / Math.max(n, 1));
      const k = src - x * n;
      // the representative lies in the column the change settles in
      tr = cx.traceChange(x, k);
      how = `from stable ${where(x >> n, x & (cols - 1))} by changing ${t.inputs[k]}`;
    }
    const cycle = (tr.cycle ?? []).map((s) => names[s]!).sort();
    osc.listed.push({
      code: osc.code,
      severity: osc.severity,
      inputs: keys[c2]!,
      cycle,
      message: `Settling in column ${keys[c2]} loops through ${listNames(cycle)}, reached ${how}.`,
      path: tr.steps,
    });
  }

  const unreachable = list('unreachable-state');
  for (let s = 0; s < ns; s++) {
    if (reach.reachableState[s]) continue;
    if (unreachable.total++ >= limit) continue;
    unreachable.listed.push({
      code: unreachable.code,
      severity: unreachable.severity,
      state: names[s]!,
      message: `State ${names[s]} is never reached from power-up or by a single-input change.`,
      path: [],
      fix: { action: 'remove-state', label: `Remove state ${names[s]}`, state: names[s]! },
    });
  }

  const reachable: string[] = [];
  for (let s = 0; s < ns; s++) if (reach.reachableState[s]) reachable.push(names[s]!);

  const counts: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  const findings: Finding[] = [];
  lists.sort((p, q) => rankCode(p.code) - rankCode(q.code));
  for (const l of lists) {
    counts[l.severity] += l.total;
    for (const f of l.listed) findings.push(f);
    if (l.total > l.listed.length) {
      const omitted = l.total - l.listed.length;
      findings.push({
        code: 'findings-truncated',
        // the note takes the severity of the list it closes, so the whole list stays sorted by severity
        severity: l.severity,
        of: l.code,
        omitted,
        message: `${omitted} more ${l.code} finding${omitted === 1 ? ' is' : 's are'} not listed.`,
        path: [],
      });
    }
  }
  return { stable, reachable, reachableStable, powerUp, findings, counts };
}

/**
 * Suggests a next state for an unspecified cell: the first state (table order) that is stable in
 * that column, so the change lands on an existing stable total state; otherwise the cell's own
 * state, which makes the cell stable.
 */
function suggestCell(t: FlowTable, state: number, column: number, key: string): Fix {
  const cols = countColumns(t.inputs.length);
  let target = state;
  for (let s = 0; s < t.states.length; s++) {
    if (t.next[s * cols + column] === s) {
      target = s;
      break;
    }
  }
  const cellName = `(${t.states[state]}, ${key})`;
  return {
    action: 'add-cell',
    label: target === state ? `Make ${cellName} stable` : `Send ${cellName} to ${t.states[target]}`,
    state: t.states[state]!,
    inputs: key,
    next: t.states[target]!,
  };
}

/**
 * Specified values of output `o` along the single-input change of input k from stable cell x (start
 * cell, then the settle path), don't-cares dropped; the cells of the settle path; and its last state.
 */
function listValuesAlong(cx: Context, x: number, k: number, o: number): { values: number[]; cells: number[]; end: number } {
  const { t, n, cols, seen } = cx;
  const outCare = t.outCare;
  const outValue = t.outValue;
  const next = t.next;
  const c2 = (x & (cols - 1)) ^ (1 << k);
  if (++cx.seenGeneration === 0x7fffffff) {
    seen.fill(0);
    cx.seenGeneration = 1;
  }
  const generation = cx.seenGeneration;
  const values: number[] = [];
  const cells: number[] = [];
  if ((outCare[x]! >>> o) & 1) values.push((outValue[x]! >>> o) & 1);
  let s = x >> n;
  for (;;) {
    const cell = s * cols + c2;
    cells.push(cell);
    if ((outCare[cell]! >>> o) & 1) values.push((outValue[cell]! >>> o) & 1);
    const nx = next[cell]!;
    seen[s] = generation;
    if (nx === L_NONE || seen[nx] === generation) return { values, cells, end: s };
    s = nx;
  }
}

function describeGlitch(cx: Context, l: CodeList, x: number, k: number, o: number): Finding {
  const { t, n, cols, names, keys } = cx;
  const s = x >> n;
  const c = x & (cols - 1);
  const c2 = c ^ (1 << k);
  const { values, end } = listValuesAlong(cx, x, k, o);
  return {
    code: l.code,
    severity: l.severity,
    state: names[s]!,
    from: keys[c]!,
    inputs: keys[c2]!,
    output: t.outputs[o]!,
    message: `From stable (${names[s]}, ${keys[c]}), changing ${t.inputs[k]} makes ${t.outputs[o]} go ${values.join(', ')} before it settles in (${names[end]}, ${keys[c2]}).`,
    path: cx.traceChange(x, k).steps,
  };
}

function describeHazard(cx: Context, l: CodeList, x: number, k: number, o: number): Finding {
  const { t, n, cols, names, keys } = cx;
  const s = x >> n;
  const c = x & (cols - 1);
  const key2 = keys[c ^ (1 << k)]!;
  const { cells } = listValuesAlong(cx, x, k, o);
  // replay the risk rule along the path to name the open cells and the values fill would give them
  const filled: number[] = [];
  let after = -1;
  for (let i = cells.length - 1; i >= 0; i--) {
    const cell = cells[i]!;
    if ((t.outCare[cell]! >>> o) & 1) after = (t.outValue[cell]! >>> o) & 1;
    filled[i] = after;
  }
  let before = (t.outCare[x]! >>> o) & 1 ? (t.outValue[x]! >>> o) & 1 : -1;
  const places: string[] = [];
  const values: number[] = [];
  for (let i = 0; i < cells.length - 1; i++) {
    const cell = cells[i]!;
    const open = !((t.outCare[cell]! >>> o) & 1);
    if (open && filled[i]! >= 0 && (before === -1 || before === filled[i])) {
      places.push(`(${names[(cell / cols) | 0]}, ${key2})`);
      values.push(filled[i]!);
    }
    before = filled[i]!;
  }
  const one = places.length === 1;
  const sameValue = values.every((v) => v === values[0]);
  return {
    code: l.code,
    severity: l.severity,
    state: names[s]!,
    from: keys[c]!,
    inputs: key2,
    output: t.outputs[o]!,
    message:
      `From stable (${names[s]}, ${keys[c]}), changing ${t.inputs[k]} passes ${listNames(places)}, where ${t.outputs[o]} is a don't-care that could add a change; ` +
      `output fill would set ${one ? 'it' : 'them'} to ${sameValue ? values[0] : listNames(values.map(String))}.`,
    path: cx.traceChange(x, k).steps,
    fix: { action: 'fill-outputs', label: 'Fill don\'t-care outputs in transient cells' },
  };
}

function describeDoubleChange(cx: Context, l: CodeList, x: number, a: number, b: number): Finding {
  const { t, n, cols, names, keys, paths } = cx;
  const s = x >> n;
  const c = x & (cols - 1);
  const target = c ^ (1 << a) ^ (1 << b);
  const ordered = (first: number, second: number): Outcome => {
    const one = cx.traceChange(x, first);
    const label = `${t.inputs[first]} then ${t.inputs[second]}`;
    if (one.end !== 'stable') return { label, state: null, path: one.steps };
    const two = cx.traceFrom(one.state, target);
    const path = one.steps.slice();
    // the second settle path continues the event: its first cell is transient, not a start
    for (const p of two.steps) path.push(p.kind === 'start' ? paths.step(one.state, target, K_TRANSIENT) : p);
    return { label, state: two.end === 'stable' ? names[two.state]! : null, path };
  };
  const ab = ordered(a, b);
  const ba = ordered(b, a);
  const d = paths.trace(s, target, { state: s, column: c });
  const direct: Outcome = { label: 'together', state: d.end === 'stable' ? names[d.state]! : null, path: d.steps };
  const say = (o: Outcome): string => (o.state === null ? 'fails' : `ends in ${o.state}`);
  return {
    code: l.code,
    severity: l.severity,
    state: names[s]!,
    from: keys[c]!,
    inputs: keys[target]!,
    message: `From stable (${names[s]}, ${keys[c]}), changing ${t.inputs[a]} and ${t.inputs[b]} together is order-dependent: ${ab.label} ${say(ab)}, ${ba.label} ${say(ba)}, and together it ${say(direct)}.`,
    path: d.steps,
    outcomes: [ab, ba, direct],
  };
}
