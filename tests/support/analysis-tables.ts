/**
 * Test support for the analysis suites: random flow tables for fast-check, the check-data loader,
 * and a naive reference of the analysis contract (plain enumeration with settle(), no shortcuts)
 * that the fast implementation is compared against.
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { columnToKey, countColumns, createTable, NONE, setCellBits, type FlowTable } from '../../src/lib/engine/model';
import { settle } from '../../src/lib/engine/settle';
import { parseKiss2 } from '../../src/lib/engine/formats/kiss2';
import { arbitraryTable } from './arbitrary-table';
import { KISS2_DIR } from './check-data';


/** A KISS2 file of the check data (MCNC/LGSynth'91 benchmark set, or the gated latch worked example). */
export function loadCheckTable(name: string): FlowTable {
  return parseKiss2(readFileSync(`${KISS2_DIR}${name}.kiss2`, 'utf8'), { name: name.replace(/-/g, '_') });
}

interface TableShape {
  inputs: number;
  outputs: number;
  states: number;
}

/**
 * Random flow tables: 0 to 3 inputs, 0 to 3 outputs, 1 to 6 states. Cells lean towards stable
 * cells and towards states that are stable in the same column, so that reachability, transient
 * chains, oscillations and unspecified cells all show up.
 */
export function arbitraryFlowTable(max: Partial<TableShape> = {}): fc.Arbitrary<FlowTable> {
  const shape = fc.record({
    inputs: fc.integer({ min: 0, max: max.inputs ?? 3 }),
    outputs: fc.integer({ min: 0, max: max.outputs ?? 3 }),
    states: fc.integer({ min: 1, max: max.states ?? 6 }),
  });
  return shape.chain((s) => {
    const cells = s.states * countColumns(s.inputs);
    const next = fc.oneof(
      { weight: 2, arbitrary: fc.constant(-1) },
      { weight: 4, arbitrary: fc.constant(-2) },
      { weight: 3, arbitrary: fc.constant(-3) },
      { weight: 4, arbitrary: fc.integer({ min: 0, max: s.states - 1 }) },
    );
    const bits = fc.array(fc.constantFrom('0', '1', '-'), { minLength: s.outputs, maxLength: s.outputs }).map((b) => b.join(''));
    return fc
      .record({
        reset: fc.integer({ min: 0, max: s.states - 1 }),
        cells: fc.array(fc.tuple(next, bits, fc.nat()), { minLength: cells, maxLength: cells }),
        policy: fc.constantFrom('guarded', 'fault', 'stepwise', 'direct' as const),
      })
      .map(({ reset, cells: spec, policy }) => buildTable(s, reset, spec, policy));
  });
}

/** -1 unspecified, -2 stable, -3 a state stable in this column (if any), else the state index. */
function buildTable(s: TableShape, reset: number, spec: [number, string, number][], policy: 'guarded' | 'fault' | 'stepwise' | 'direct'): FlowTable {
  const t = createTable({
    name: 'random',
    inputs: Array.from({ length: s.inputs }, (_, i) => `in${i}`),
    outputs: Array.from({ length: s.outputs }, (_, i) => `out${i}`),
    states: Array.from({ length: s.states }, (_, i) => `s${i}`),
    reset,
    settings: { doubleChange: policy },
  });
  const cols = countColumns(s.inputs);
  // first pass: stable cells, so that -3 can point at them
  spec.forEach(([kind], cell) => {
    if (kind === -2) t.next[cell] = Math.floor(cell / cols);
  });
  spec.forEach(([kind, bits, pick], cell) => {
    const row = Math.floor(cell / cols);
    const c = cell % cols;
    if (kind === -1) t.next[cell] = NONE;
    else if (kind === -3) {
      const stableHere: number[] = [];
      for (let q = 0; q < s.states; q++) if (spec[q * cols + c]![0] === -2) stableHere.push(q);
      t.next[cell] = stableHere.length ? stableHere[pick % stableHere.length]! : row;
    } else if (kind >= 0) t.next[cell] = kind;
    if (t.next[cell] !== NONE) setCellBits(t, cell, bits);
  });
  return t;
}

/**
 * The tables the analysis properties run on: half from the shared generator (arbitrary-table.ts:
 * hostile names, sparse and dense tables), half from arbitraryFlowTable (structured towards
 * reachable stable states, transient chains and loops, and tables without inputs).
 */
export function arbitraryAnalysisTable(max: Partial<TableShape> = {}): fc.Arbitrary<FlowTable> {
  return fc.oneof(
    arbitraryTable({ minInputs: 1, maxInputs: Math.max(1, max.inputs ?? 3), maxOutputs: max.outputs ?? 3, maxStates: max.states ?? 6 }),
    arbitraryFlowTable(max),
  );
}

/** What the reference computes: everything keyed by names. */
export interface ReferenceAnalysis {
  stable: Set<string>;
  reachableStable: Set<string>;
  reachable: Set<string>;
  unspecified: Set<string>;
  sicToUnspecified: number;
  oscillations: Set<string>;
  powerUpUnspecified: Set<string>;
  glitches: Set<string>;
}

/**
 * The contract by plain enumeration: settle() per power-up column, BFS over single-input changes
 * with settle() per change, output values listed along each path and their changes counted.
 */
export function referenceAnalysis(t: FlowTable): ReferenceAnalysis {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const key = (c: number) => columnToKey(c, n);
  const ref: ReferenceAnalysis = {
    stable: new Set(),
    reachableStable: new Set(),
    reachable: new Set(),
    unspecified: new Set(),
    sicToUnspecified: 0,
    oscillations: new Set(),
    powerUpUnspecified: new Set(),
    glitches: new Set(),
  };
  for (let s = 0; s < t.states.length; s++) for (let c = 0; c < cols; c++) if (t.next[s * cols + c] === s) ref.stable.add(`${t.states[s]}@${key(c)}`);
  const queue: [number, number][] = [];
  const seen = new Set<number>();
  const visit = (s: number, c: number) => {
    if (!seen.has(s * cols + c)) {
      seen.add(s * cols + c);
      queue.push([s, c]);
    }
  };
  const note = (r: ReturnType<typeof settle>, c: number) => {
    for (const p of r.path) ref.reachable.add(t.states[p]!);
    if (r.kind === 'oscillation') ref.oscillations.add(`${key(c)}:${r.cycle.map((q) => t.states[q]!).sort().join(',')}`);
  };
  for (let c = 0; c < cols; c++) {
    const r = settle(t, t.reset, c);
    note(r, c);
    if (r.kind === 'stable') visit(r.state, c);
    if (r.kind === 'unspecified') ref.powerUpUnspecified.add(key(c));
  }
  while (queue.length) {
    const [s, c] = queue.shift()!;
    ref.reachableStable.add(`${t.states[s]}@${key(c)}`);
    for (let k = 0; k < n; k++) {
      const c2 = c ^ (1 << k);
      const r = settle(t, s, c2);
      note(r, c2);
      if (r.kind === 'unspecified') {
        ref.unspecified.add(`${t.states[r.state]}@${key(c2)}`);
        ref.sicToUnspecified++;
      }
      if (r.kind !== 'stable') continue;
      visit(r.state, c2);
      for (let o = 0; o < t.outputs.length; o++) {
        const values: number[] = [];
        const take = (cell: number) => {
          if ((t.outCare[cell]! >>> o) & 1) values.push((t.outValue[cell]! >>> o) & 1);
        };
        take(s * cols + c);
        for (const p of r.path) take(p * cols + c2);
        let changes = 0;
        for (let i = 1; i < values.length; i++) if (values[i] !== values[i - 1]) changes++;
        if (changes > 1) ref.glitches.add(`${t.states[s]}@${key(c)}>${key(c2)}:${t.outputs[o]}`);
      }
    }
  }
  return ref;
}
