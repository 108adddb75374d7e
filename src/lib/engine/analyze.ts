/**
 * Analysis of a flow table under the engine contract (issue: "Analysis: semantics"): stable total
 * states, power-up, reachability under single-input changes (SIC), and findings with drawable paths.
 *
 * Cost: one linear settling pass (reachability.ts), one pass over the reachable stable total states
 * times the inputs (SIC checks are O(1) each from the per-cell summaries), and one pass times the
 * input pairs for double changes. Strings are only built for listed findings.
 */
import { cellBits, columnToKey, countColumns, NONE, type CellRef, type FlowTable } from './model';
import { SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED } from './settle';
import {
  FINDINGS_PER_CODE,
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
  /** Sorted by severity, then code, then place (state order, grid column order, input order). */
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

/**
 * A tracer for many paths of one table: it reuses its visit marks and caches column keys and cell
 * output strings, so listing hundreds of findings stays cheap.
 */
export function createTracer(t: FlowTable): SettleTracer {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const keys = new Map<number, string>();
  const bits = new Map<number, string>();
  const stamp = new Int32Array(t.states.length);
  const pos = new Int32Array(t.states.length);
  let generation = 0;
  const keyOf = (c: number): string => {
    let k = keys.get(c);
    if (k === undefined) keys.set(c, (k = columnToKey(c, n)));
    return k;
  };
  const bitsOf = (cell: number): string => {
    let b = bits.get(cell);
    if (b === undefined) bits.set(cell, (b = cellBits(t, cell)));
    return b;
  };
  const step = (s: number, c: number, kind: PathStep['kind']): PathStep => ({ state: t.states[s]!, inputs: keyOf(c), kind, outputs: bitsOf(s * cols + c) });
  return (state, column, start) => {
    if (++generation === 0x7fffffff) {
      stamp.fill(0);
      generation = 1;
    }
    const steps: PathStep[] = [];
    const withStart = start !== undefined;
    if (start) steps.push(step(start.state, start.column, 'start'));
    const order: number[] = [];
    let s = state;
    for (;;) {
      const nx = t.next[s * cols + column]!;
      stamp[s] = generation;
      pos[s] = order.length;
      order.push(s);
      if (nx === L_NONE) {
        steps.push(step(s, column, 'unspecified'));
        return { steps, end: 'unspecified', state: s };
      }
      if (nx === s) {
        steps.push(step(s, column, 'stable'));
        return { steps, end: 'stable', state: s };
      }
      steps.push(step(s, column, !withStart && steps.length === 0 ? 'start' : 'transient'));
      if (stamp[nx] === generation) {
        steps.push(step(nx, column, 'repeat'));
        return { steps, end: 'oscillation', state: nx, cycle: order.slice(pos[nx]) };
      }
      s = nx;
    }
  };
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

/** Collects findings of one code in generation order, listing the first `limit` and counting the rest. */
class CodeList {
  readonly listed: Finding[] = [];
  total = 0;
  constructor(
    readonly code: FindingCode,
    readonly limit: number,
  ) {}
  /** True when the next finding will be listed (so the caller builds it). */
  get open(): boolean {
    return this.total < this.limit;
  }
  add(build: () => Omit<Finding, 'code' | 'severity'>): void {
    if (this.total < this.limit) this.listed.push({ code: this.code, severity: SEVERITY_OF[this.code], ...build() });
    this.total++;
  }
  /** Counts one finding past the cap without building it. */
  skip(): void {
    this.total++;
  }
}

/** Analyzes a table: stable and reachable total states, power-up, and sorted findings. */
export function analyzeTable(t: FlowTable, options: AnalyzeOptions = {}): Analysis {
  const limit = Math.max(0, options.limit ?? FINDINGS_PER_CODE);
  const cells = settleCells(t);
  const reach = computeReach(t, cells);
  return buildAnalysis(t, reach, limit);
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
  const lists = new Map<FindingCode, CodeList>();
  const list = (code: FindingCode): CodeList => {
    let l = lists.get(code);
    if (!l) lists.set(code, (l = new CodeList(code, limit)));
    return l;
  };
  const where = (s: number, c: number): string => `(${names[s]}, ${keys[c]})`;
  const trace = createTracer(t);

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
    if (!any) noStable.add(() => ({ state: names[s]!, message: `Row ${names[s]} has no stable cell.`, path: [] }));
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
    const tr = trace(t.reset, c);
    const f = fault[cell]!;
    powerUp.push({ inputs: keys[c]!, result: tr.end, state: f === L_SETTLE_OK ? names[term[cell]! >> n]! : null, path: tr.steps });
    if (f === L_SETTLE_OK) continue;
    if (f === L_SETTLE_OSCILLATION) noteFailure(cell, -2 - c);
    else {
      const u = term[cell]! >> n;
      powerUpUnspec.add(() => ({
        inputs: keys[c]!,
        state: names[u]!,
        message: `Power-up with inputs ${keys[c]} reaches the unspecified cell ${where(u, c)}.`,
        path: tr.steps,
        fix: suggestCell(t, u, c, keys[c]!),
      }));
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
      if (g !== 0) {
        for (let o = 0; o < m; o++) if ((g >>> o) & 1) glitches.open ? glitches.add(() => describeGlitch(t, trace, s, c, k, o)) : glitches.skip();
      }
      // same rule as computeEntryRisk, inlined
      const entry = next[e] !== s ? ~outCare[e]! & fc & (~care0 | ~(val0 ^ fv)) : 0;
      const h = ((risk[e]! | entry) & ~g) >>> 0;
      if (h !== 0) {
        for (let o = 0; o < m; o++) if ((h >>> o) & 1) hazards.open ? hazards.add(() => describeHazard(t, trace, s, c, k, o)) : hazards.skip();
      }
    }
    for (let a = 0; a < n; a++) {
      for (let b = a + 1; b < n; b++) {
        const target = c ^ (1 << a) ^ (1 << b);
        const va = via[a]!;
        const vb = via[b]!;
        const direct = base + target;
        const sd = settled[direct]!;
        if (sd !== L_NONE && va !== L_NONE && vb !== L_NONE && settled[(va << n) | target] === sd && settled[(vb << n) | target] === sd) continue;
        if (doubles.open) doubles.add(() => describeDoubleChange(t, trace, s, c, a, b));
        else doubles.skip();
      }
    }
  }

  // unspecified transitions, one per unspecified cell, in state then grid column order
  const unspec = list('unspecified-transition');
  unspecCells.sort((p, q) => (p >> n) - (q >> n) || rank[p & (cols - 1)]! - rank[q & (cols - 1)]!);
  for (const u of unspecCells) {
    const src = source[u]!;
    if (src < 0) continue;
    unspec.add(() => {
      const us = u >> n;
      const uc = u & (cols - 1);
      const x = Math.floor(src / Math.max(n, 1));
      const k = src - x * n;
      const s = x >> n;
      const c = x & (cols - 1);
      const tr = trace(s, c ^ (1 << k), { state: s, column: c });
      const others = hits[u]! - 1;
      return {
        state: names[us]!,
        inputs: keys[uc]!,
        message:
          `From stable ${where(s, c)}, changing ${t.inputs[k]} reaches the unspecified cell ${where(us, uc)}` +
          (others > 0 ? `, as ${others === 1 ? 'does 1 other single-input change' : `do ${others} other single-input changes`}.` : '.'),
        path: tr.steps,
        fix: suggestCell(t, us, uc, keys[uc]!),
      };
    });
  }

  // oscillations, one per (column, cycle), in grid column then state order
  const osc = list('oscillation');
  oscCells.sort((p, q) => rank[p & (cols - 1)]! - rank[q & (cols - 1)]! || (p >> n) - (q >> n));
  for (const rep of oscCells) {
    osc.add(() => {
      const src = source[rep]!;
      const c2 = rep & (cols - 1);
      let tr: SettleTrace;
      let how: string;
      if (src <= -2) {
        tr = trace(t.reset, c2);
        how = 'at power-up';
      } else {
        const x = Math.floor(src / Math.max(n, 1));
        const k = src - x * n;
        const s = x >> n;
        const c = x & (cols - 1);
        tr = trace(s, c2, { state: s, column: c });
        how = `from stable ${where(s, c)} by changing ${t.inputs[k]}`;
      }
      const cycle = (tr.cycle ?? []).map((s) => names[s]!).sort();
      return {
        inputs: keys[c2]!,
        cycle,
        message: `Settling in column ${keys[c2]} loops through ${listNames(cycle)}, reached ${how}.`,
        path: tr.steps,
      };
    });
  }

  const unreachable = list('unreachable-state');
  for (let s = 0; s < ns; s++) {
    if (reach.reachableState[s]) continue;
    unreachable.add(() => ({
      state: names[s]!,
      message: `State ${names[s]} is never reached from power-up or by a single-input change.`,
      path: [],
      fix: { action: 'remove-state', label: `Remove state ${names[s]}`, state: names[s]! },
    }));
  }

  const reachable: string[] = [];
  for (let s = 0; s < ns; s++) if (reach.reachableState[s]) reachable.push(names[s]!);

  const counts: Record<Severity, number> = { error: 0, warning: 0, info: 0 };
  const findings: Finding[] = [];
  const codes = [...lists.keys()].sort((p, q) => rankCode(p) - rankCode(q));
  for (const code of codes) {
    const l = lists.get(code)!;
    counts[SEVERITY_OF[code]] += l.total;
    findings.push(...l.listed);
    if (l.total > l.listed.length) {
      const omitted = l.total - l.listed.length;
      findings.push({
        code: 'findings-truncated',
        // the note takes the severity of the list it closes, so the whole list stays sorted by severity
        severity: SEVERITY_OF[code],
        of: code,
        omitted,
        message: `${omitted} more ${code} finding${omitted === 1 ? ' is' : 's are'} not listed.`,
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

/** Specified values of output `o` along an SIC path (start cell, then the settle path), don't-cares dropped. */
function listValuesAlong(t: FlowTable, s: number, c: number, c2: number, o: number): { values: number[]; cells: number[]; end: number } {
  const cols = countColumns(t.inputs.length);
  const values: number[] = [];
  const cells: number[] = [];
  const start = s * cols + c;
  if ((t.outCare[start]! >>> o) & 1) values.push((t.outValue[start]! >>> o) & 1);
  let x = s;
  const seen = new Set<number>();
  for (;;) {
    const cell = x * cols + c2;
    cells.push(cell);
    if ((t.outCare[cell]! >>> o) & 1) values.push((t.outValue[cell]! >>> o) & 1);
    const nx = t.next[cell]!;
    if (nx === x || nx === L_NONE || seen.has(nx)) return { values, cells, end: x };
    seen.add(x);
    x = nx;
  }
}

function describeGlitch(t: FlowTable, trace: SettleTracer, s: number, c: number, k: number, o: number): Omit<Finding, 'code' | 'severity'> {
  const n = t.inputs.length;
  const c2 = c ^ (1 << k);
  const { values, end } = listValuesAlong(t, s, c, c2, o);
  const tr = trace(s, c2, { state: s, column: c });
  return {
    state: t.states[s]!,
    from: columnToKey(c, n),
    inputs: columnToKey(c2, n),
    output: t.outputs[o]!,
    message: `From stable (${t.states[s]}, ${columnToKey(c, n)}), changing ${t.inputs[k]} makes ${t.outputs[o]} go ${values.join(', ')} before it settles in (${t.states[end]}, ${columnToKey(c2, n)}).`,
    path: tr.steps,
  };
}

function describeHazard(t: FlowTable, trace: SettleTracer, s: number, c: number, k: number, o: number): Omit<Finding, 'code' | 'severity'> {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const c2 = c ^ (1 << k);
  const key2 = columnToKey(c2, n);
  const { cells } = listValuesAlong(t, s, c, c2, o);
  // replay the risk rule along the path to name the open cells and the values fill would give them
  const filled: number[] = [];
  let after = -1;
  for (let i = cells.length - 1; i >= 0; i--) {
    const cell = cells[i]!;
    if ((t.outCare[cell]! >>> o) & 1) after = (t.outValue[cell]! >>> o) & 1;
    filled[i] = after;
  }
  const start = s * cols + c;
  let before = (t.outCare[start]! >>> o) & 1 ? (t.outValue[start]! >>> o) & 1 : -1;
  const places: string[] = [];
  const values: number[] = [];
  for (let i = 0; i < cells.length - 1; i++) {
    const cell = cells[i]!;
    const open = !((t.outCare[cell]! >>> o) & 1);
    if (open && filled[i]! >= 0 && (before === -1 || before === filled[i])) {
      places.push(`(${t.states[(cell / cols) | 0]}, ${key2})`);
      values.push(filled[i]!);
    }
    before = filled[i]!;
  }
  const one = places.length === 1;
  const sameValue = values.every((v) => v === values[0]);
  const tr = trace(s, c2, { state: s, column: c });
  return {
    state: t.states[s]!,
    from: columnToKey(c, n),
    inputs: key2,
    output: t.outputs[o]!,
    message:
      `From stable (${t.states[s]}, ${columnToKey(c, n)}), changing ${t.inputs[k]} passes ${listNames(places)}, where ${t.outputs[o]} is a don't-care that could add a change; ` +
      `output fill would set ${one ? 'it' : 'them'} to ${sameValue ? values[0] : listNames(values.map(String))}.`,
    path: tr.steps,
    fix: { action: 'fill-outputs', label: 'Fill don\'t-care outputs in transient cells' },
  };
}

function describeDoubleChange(t: FlowTable, trace: SettleTracer, s: number, c: number, a: number, b: number): Omit<Finding, 'code' | 'severity'> {
  const n = t.inputs.length;
  const target = c ^ (1 << a) ^ (1 << b);
  const start = { state: s, column: c };
  const ordered = (first: number, second: number): Outcome => {
    const mid = c ^ (1 << first);
    const one = trace(s, mid, start);
    const label = `${t.inputs[first]} then ${t.inputs[second]}`;
    if (one.end !== 'stable') return { label, state: null, path: one.steps };
    const two = trace(one.state, target);
    const steps = [...one.steps, ...two.steps.map((p) => (p.kind === 'start' ? { ...p, kind: 'transient' as const } : p))];
    return { label, state: two.end === 'stable' ? t.states[two.state]! : null, path: steps };
  };
  const ab = ordered(a, b);
  const ba = ordered(b, a);
  const d = trace(s, target, start);
  const direct: Outcome = { label: 'together', state: d.end === 'stable' ? t.states[d.state]! : null, path: d.steps };
  const say = (o: Outcome): string => (o.state === null ? 'fails' : `ends in ${o.state}`);
  return {
    state: t.states[s]!,
    from: columnToKey(c, n),
    inputs: columnToKey(target, n),
    message: `From stable (${t.states[s]}, ${columnToKey(c, n)}), changing ${t.inputs[a]} and ${t.inputs[b]} together is order-dependent: ${ab.label} ${say(ab)}, ${ba.label} ${say(ba)}, and together it ${say(direct)}.`,
    path: d.steps,
    outcomes: [ab, ba, direct],
  };
}
