import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { countColumns, createTable, NONE, setCellBits, type FlowTable } from '../../../src/lib/engine/model';
import { settleAll, SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED } from '../../../src/lib/engine/settle';
import { computeReach, runtimeFromCells, settleCells, type SettledCells } from '../../../src/lib/engine/reachability';
import { arbitraryAnalysisTable, loadCheckTable, referenceAnalysis } from '../../support/analysis-tables';
import { arbitraryTable } from '../../support/arbitrary-table';
import { listSettleMismatches, naiveSettleCells } from '../../support/settle-oracle';

/** Settling outcome and, on settled cells, the output summaries of one cell, for hand-written expectations. */
function describeCell(sc: SettledCells, cell: number) {
  const base = { fault: sc.fault[cell], state: sc.state[cell], term: sc.term[cell] };
  if (sc.fault[cell] !== SETTLE_OK) return base;
  return { ...base, firstCare: sc.firstCare[cell], firstValue: sc.firstValue[cell], once: sc.once[cell], twice: sc.twice[cell], risk: sc.risk[cell] };
}

/** A table from rows of `[next state or -1, output bits]`, one entry per column. */
function buildTable(inputs: string[], outputs: string[], rows: Record<string, [number, string][]>): FlowTable {
  const t = createTable({ name: 'hand', inputs, outputs, states: Object.keys(rows) });
  Object.values(rows).forEach((row, s) =>
    row.forEach(([next, bits], c) => {
      const cell = s * row.length + c;
      t.next[cell] = next;
      if (next !== NONE) setCellBits(t, cell, bits);
    }),
  );
  return t;
}

/** What the random tables covered, counted on the reference, so the properties cannot pass vacuously. */
interface Coverage {
  tables: number;
  noOutputs: number;
  oscillation: number;
  unspecified: number;
  openStart: number;
  allOpen: number;
  twice: number;
  risk: number;
  topBit: number;
}

function checkAgainstReference(t: FlowTable, seen: Coverage): void {
  const want = naiveSettleCells(t);
  const got = settleCells(t);
  expect(listSettleMismatches(t, got, want)).toEqual([]);
  // the plain settling and the runtime built from the cells agree with the reference too
  const all = settleAll(t);
  expect([...all.state]).toEqual([...want.state]);
  expect([...all.fault]).toEqual([...want.fault]);
  const rt = runtimeFromCells(t, got);
  expect(rt.columns).toBe(countColumns(t.inputs.length));
  expect([...rt.settled.state]).toEqual([...want.state]);
  expect([...rt.settled.fault]).toEqual([...want.fault]);
  seen.tables++;
  if (t.outputs.length === 0) seen.noOutputs++;
  if (want.fault.includes(SETTLE_OSCILLATION)) seen.oscillation++;
  if (want.fault.includes(SETTLE_UNSPECIFIED)) seen.unspecified++;
  if (t.outputs.length === 0) return;
  const allBits = 2 ** t.outputs.length - 1;
  let openStart = false;
  let allOpen = false;
  let twice = false;
  let risk = false;
  let topBit = false;
  for (let cell = 0; cell < want.fault.length; cell++) {
    if (want.fault[cell] !== SETTLE_OK) continue;
    if (t.next[cell] !== Math.floor(cell / want.columns) && (t.outCare[cell]! & want.firstCare[cell]!) !== want.firstCare[cell]) openStart = true;
    if (want.firstCare[cell] !== allBits) allOpen = true;
    if (want.twice[cell]) twice = true;
    if (want.risk[cell]) risk = true;
    if ((want.firstCare[cell]! | want.risk[cell]! | want.once[cell]!) >>> 31) topBit = true;
  }
  seen.openStart += +openStart;
  seen.allOpen += +allOpen;
  seen.twice += +twice;
  seen.risk += +risk;
  seen.topBit += +topBit;
}

const newCoverage = (): Coverage => ({ tables: 0, noOutputs: 0, oscillation: 0, unspecified: 0, openStart: 0, allOpen: 0, twice: 0, risk: 0, topBit: 0 });

describe('settleCells', () => {
  it('settles and summarizes a hand-made two-output table as worked out by hand', () => {
    // Column 0 is one chain s0 -> s1 -> s2 -> s3 -> s4 (stable). Bit 0 is z0, bit 1 is z1.
    //   z0 along it: 0 - 1 - 0, so from s0 it changes twice, from s1 and s2 once (1 then 0).
    //   z1 along it: - 1 - - 1, never changes; s2 and s3 leave it open between a 1 (or an open cell
    //   that fill would make 1) and the 1 they head to, so every start before s2 has z1 at risk; s3
    //   leaves z0 open after s2's 1 while heading to 0, a single change anyway, so z0 is never at risk.
    //   From s3 only the stable s4 follows, and a stable end adds no risk.
    // Column 1: s0 -> s3 -> s1 -> s3 loops (named by its lowest state s1, cell 3); s4 -> s2 and s2
    // is unspecified (cell 5). Summaries are only defined on settled cells.
    const t = buildTable(['a'], ['z0', 'z1'], {
      s0: [[1, '0-'], [3, '00']],
      s1: [[2, '-1'], [3, '11']],
      s2: [[3, '1-'], [NONE, '']],
      s3: [[4, '--'], [1, '--']],
      s4: [[4, '01'], [2, '1-']],
    });
    const settledAt4 = { fault: SETTLE_OK, state: 4, term: 8 };
    const loop = { fault: SETTLE_OSCILLATION, state: NONE, term: 3 };
    const unspecified = { fault: SETTLE_UNSPECIFIED, state: NONE, term: 5 };
    const expected = [
      { ...settledAt4, firstCare: 0b11, firstValue: 0b10, once: 0b01, twice: 0b01, risk: 0b10 }, // s0
      loop,
      { ...settledAt4, firstCare: 0b11, firstValue: 0b11, once: 0b01, twice: 0, risk: 0b10 }, // s1
      loop,
      { ...settledAt4, firstCare: 0b11, firstValue: 0b11, once: 0b01, twice: 0, risk: 0b10 }, // s2
      unspecified,
      { ...settledAt4, firstCare: 0b11, firstValue: 0b10, once: 0, twice: 0, risk: 0 }, // s3
      loop,
      { ...settledAt4, firstCare: 0b11, firstValue: 0b10, once: 0, twice: 0, risk: 0 }, // s4
      unspecified,
    ];
    for (const sc of [settleCells(t), naiveSettleCells(t)]) expect(expected.map((_, cell) => describeCell(sc, cell))).toEqual(expected);
  });

  it('settles and summarizes a hand-made one-output table as worked out by hand', () => {
    // No inputs, one column, one output z. b is a don't-care on the way to the stable c = 1.
    //   a (1) -> b -> c (1): b is open between equal values, so a has z at risk; no change.
    //   a2 (0) -> b -> c (1): b sits between 0 and 1, a single change whatever b shows: no risk.
    //   d (-) -> a: the risk of b is still ahead; the first value is a's 1.
    //   e (-) -> b: b follows an open cell, so it is at risk (either value could be a change).
    //   i (1) -> a2 (0) -> b -> c (1): 1, 0, 1 changes twice; b is entered from a2's 0: no risk.
    //   j (0) -> e -> b -> c (1): one change; e follows j's 0 heading to 1 (fine), but b follows
    //   the open e, so z is at risk.
    //   h -> f -> g and f -> g leave z open all the way to the stable g: nothing to report.
    const t = buildTable([], ['z'], {
      a: [[2, '1']],
      a2: [[2, '0']],
      b: [[3, '-']],
      c: [[3, '1']],
      d: [[0, '-']],
      e: [[2, '-']],
      f: [[7, '-']],
      g: [[7, '-']],
      h: [[6, '-']],
      i: [[1, '1']],
      j: [[5, '0']],
    });
    const atC = { fault: SETTLE_OK, state: 3, term: 3 };
    const atG = { fault: SETTLE_OK, state: 7, term: 7, firstCare: 0, firstValue: 0, once: 0, twice: 0, risk: 0 };
    const expected = [
      { ...atC, firstCare: 1, firstValue: 1, once: 0, twice: 0, risk: 1 }, // a
      { ...atC, firstCare: 1, firstValue: 0, once: 1, twice: 0, risk: 0 }, // a2
      { ...atC, firstCare: 1, firstValue: 1, once: 0, twice: 0, risk: 0 }, // b
      { ...atC, firstCare: 1, firstValue: 1, once: 0, twice: 0, risk: 0 }, // c
      { ...atC, firstCare: 1, firstValue: 1, once: 0, twice: 0, risk: 1 }, // d
      { ...atC, firstCare: 1, firstValue: 1, once: 0, twice: 0, risk: 1 }, // e
      atG, // f
      atG, // g
      atG, // h
      { ...atC, firstCare: 1, firstValue: 1, once: 1, twice: 1, risk: 0 }, // i
      { ...atC, firstCare: 1, firstValue: 0, once: 1, twice: 0, risk: 1 }, // j
    ];
    for (const sc of [settleCells(t), naiveSettleCells(t)]) expect(expected.map((_, cell) => describeCell(sc, cell))).toEqual(expected);
  });

  it('leaves the summaries empty when the table has no outputs', () => {
    const t = buildTable(['a'], [], { p: [[1, ''], [0, '']], q: [[1, ''], [NONE, '']] });
    const sc = settleCells(t);
    for (const f of ['firstCare', 'firstValue', 'once', 'twice', 'risk'] as const) expect(sc[f].length).toBe(0);
    expect([...sc.state]).toEqual([1, 0, 1, NONE]);
  });

  it('matches the naive reference on random tables', () => {
    const seen = newCoverage();
    const runs: [fc.Arbitrary<FlowTable>, number][] = [
      // the shared generator: 0 to 4 inputs, 0 to 3 outputs, 1 to 8 states, sparse to dense
      [arbitraryTable({ minInputs: 0, hostileNames: false, extras: false }), 2000],
      // long transient chains and many loops: few stable cells, more states
      [arbitraryTable({ minInputs: 0, maxInputs: 2, minOutputs: 1, minStates: 10, maxStates: 40, stable: 0.1, unspecified: 0.05, hostileNames: false, extras: false }), 300],
      // up to the 32-output limit, so the top bit of every mask is exercised
      [arbitraryTable({ maxInputs: 2, minOutputs: 29, maxOutputs: 32, maxStates: 8, hostileNames: false, extras: false }), 200],
      // the analysis suites' tables, which lean towards chains into stable cells
      [arbitraryAnalysisTable({ inputs: 4, states: 8 }), 500],
    ];
    for (const [arb, numRuns] of runs) fc.assert(fc.property(arb, (t) => checkAgainstReference(t, seen)), { numRuns, seed: 0x5eed });
    expect(seen.tables).toBe(3000);
    for (const k of ['noOutputs', 'oscillation', 'unspecified', 'openStart', 'allOpen', 'twice', 'risk', 'topBit'] as const) expect(seen[k], k).toBeGreaterThan(20);
  });

  it('reaches the same stable total states as plain enumeration', () => {
    // MCNC/LGSynth'91 benchmark set: lion, lion9, train11, bbara; compared with the reference enumeration.
    for (const name of ['lion', 'lion9', 'train11', 'bbara']) {
      const t = loadCheckTable(name);
      const reach = computeReach(t);
      const cols = reach.cells.columns;
      const got = new Set([...reach.stableList].map((x) => `${t.states[Math.floor(x / cols)]}@${(x % cols).toString(2).padStart(t.inputs.length, '0').split('').reverse().join('')}`));
      expect(got).toEqual(referenceAnalysis(t).reachableStable);
    }
  });
});
