/**
 * Test vectors for the generated unit tests, computed with the engine's run-time contract
 * (runtime.ts): power-up in every column, the tour, saved scenarios, single-input-change
 * faults and double changes under the table's policy.
 */
import { FlowTableError, keyToColumn, type FlowTable } from '../engine/model';
import { FAULT_REASONS, powerUp, stepMachine, type FaultReason, type MachineState, type Runtime } from '../engine/runtime';
import { computeReach, runtimeFromCells, type Reach } from '../engine/reachability';
import { buildTour } from '../engine/tour';
import { SETTLE_OK } from '../engine/settle';

/** One snapshot and the expected machine after it. `fault` is the index in FAULT_REASONS. */
export interface StepVector {
  /** The snapshot applied. */
  event: number;
  /** The snapshot the machine holds afterwards (the previous one when the event faulted). */
  inputs: number;
  state: number;
  outputs: number;
  fault: number;
}

/** A power-up (the first step) and the snapshots after it. */
export interface SequenceVector {
  name: string;
  steps: StepVector[];
}

/** One event from a machine set up directly in a total state. */
export interface CaseVector {
  from: MachineState;
  inputs: number;
  expect: MachineState;
  fault: number;
}

/** Everything the generated tests assert. */
export interface TestVectors {
  /** Power-up in every column, in column order. */
  powerUp: StepVector[];
  /** The tour, one sequence per power-up segment. */
  tour: SequenceVector[];
  /** Single-input-change edges of the tour that the tour covers, out of all such edges. */
  tourCovers: number;
  tourTotal: number;
  /** Saved scenarios of the table. */
  scenarios: SequenceVector[];
  /** Single-input changes from reachable stable total states that fault (unspecified or oscillation). */
  faults: CaseVector[];
  /** Changes of two or more bits under the table's double-change policy. */
  doubleChanges: CaseVector[];
}

/** Caps that keep the generated test sources small for big tables; the tour is never cut. */
export const VECTOR_LIMITS = { faults: 512, doubleApplied: 128, doubleFaulted: 128, multi: 32 } as const;

function faultIndex(f: FaultReason): number {
  return FAULT_REASONS.indexOf(f);
}

function runSequence(rt: Runtime, name: string, columns: number[]): SequenceVector {
  const steps: StepVector[] = [];
  let m: MachineState | undefined;
  for (const c of columns) {
    const o = m === undefined ? powerUp(rt, c) : stepMachine(rt, m, c);
    m = o.next;
    steps.push({ event: c, inputs: m.column, state: m.state, outputs: m.outputs, fault: faultIndex(o.fault) });
  }
  return { name, steps };
}

/** Evenly spaced picks of at most `n` items, in order. */
function spread<T>(items: T[], n: number): T[] {
  if (items.length <= n) return items;
  const out: T[] = [];
  for (let i = 0; i < n; i++) out.push(items[Math.floor((i * items.length) / n)]!);
  return out;
}

/** Scenario input vectors as columns; a vector of the wrong width is a located error. */
function scenarioColumns(t: FlowTable, index: number): number[] {
  const s = t.scenarios[index]!;
  return s.inputs.map((v, j) => {
    if (v.length !== t.inputs.length)
      throw new FlowTableError([
        { where: `scenarios[${index}].inputs[${j}]`, message: `input vector "${v}" has ${v.length} characters, the table has ${t.inputs.length} inputs`, hint: `one character per input, in the order ${t.inputs.join(' ')}` },
      ]);
    return keyToColumn(v);
  });
}

/** Computes all test vectors of a table under its double-change policy. */
export function buildVectors(t: FlowTable, reach: Reach = computeReach(t)): TestVectors {
  const rt = runtimeFromCells(t, reach.cells);
  const n = t.inputs.length;
  const cols = reach.cells.columns;
  const outMask = t.outputs.length === 32 ? 0xffffffff : (1 << t.outputs.length) - 1;

  const powerUpVectors: StepVector[] = [];
  for (let c = 0; c < cols; c++) {
    const o = powerUp(rt, c);
    powerUpVectors.push({ event: c, inputs: c, state: o.next.state, outputs: o.next.outputs, fault: faultIndex(o.fault) });
  }

  const tour = buildTour(t, reach);
  const tourSequences = tour.segments.map((seg, i) =>
    runSequence(rt, `tour segment ${i + 1}`, [keyToColumn(seg.powerUp), ...seg.steps.map(keyToColumn)]),
  );

  const scenarios = t.scenarios.map((s, i) => runSequence(rt, `scenario ${s.name}`, scenarioColumns(t, i)));

  // a machine resting in stable cell x; don't-care outputs get an alternating pattern so holding is visible
  const restingAt = (x: number, i: number): MachineState => {
    const pattern = (i & 1 ? 0xaaaaaaaa : 0x55555555) & outMask;
    const care = t.outCare[x]!;
    return { state: (x / cols) | 0, column: x % cols, outputs: ((t.outValue[x]! & care) | (pattern & ~care)) >>> 0 };
  };
  const caseOf = (from: MachineState, column: number): CaseVector => {
    const o = stepMachine(rt, from, column);
    return { from, inputs: column, expect: o.next, fault: faultIndex(o.fault) };
  };

  const faults: CaseVector[] = [];
  const applied: CaseVector[] = [];
  const faulted: CaseVector[] = [];
  const multi: CaseVector[] = [];
  reach.stableList.forEach((x, i) => {
    const from = restingAt(x, i);
    const c = from.column;
    for (let k = 0; k < n; k++) {
      const e = x - c + (c ^ (1 << k));
      if (reach.cells.fault[e] !== SETTLE_OK) faults.push(caseOf(from, c ^ (1 << k)));
      for (let j = k + 1; j < n; j++) {
        const v = caseOf(from, c ^ (1 << k) ^ (1 << j));
        (v.fault === 0 ? applied : faulted).push(v);
      }
    }
    if (n >= 3) multi.push(caseOf(from, c ^ 7));
  });
  const doubleChanges = [
    ...spread(applied, VECTOR_LIMITS.doubleApplied),
    ...spread(faulted, VECTOR_LIMITS.doubleFaulted),
    ...spread(multi, VECTOR_LIMITS.multi),
  ];

  return {
    powerUp: powerUpVectors,
    tour: tourSequences,
    tourCovers: tour.covers,
    tourTotal: tour.total,
    scenarios,
    faults: spread(faults, VECTOR_LIMITS.faults),
    doubleChanges,
  };
}
