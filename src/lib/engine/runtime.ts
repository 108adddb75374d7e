/**
 * The run-time contract shared by the simulator and the generated firmware: what one input
 * snapshot does to a settled controller, including double changes and faults.
 */
import { countColumns, NONE, type DoubleChangePolicy, type FlowTable } from './model';
import { settleAll, SETTLE_OK, type SettledTable } from './settle';

/** Why an event faulted; the numbers are the generated code's fault codes too. */
export const FAULT_REASONS = ['none', 'unspecified', 'oscillation', 'double-change', 'power-up'] as const;

/** One of FAULT_REASONS. */
export type FaultReason = (typeof FAULT_REASONS)[number];

/** The controller between events: a total state (the state was settled in `column`) and the output pins. */
export interface MachineState {
  state: number;
  column: number;
  outputs: number;
}

/** What one event did. */
export interface EventOutcome {
  next: MachineState;
  fault: FaultReason;
  /** Number of input bits that differed from the held column. */
  changed: number;
}

/** Precomputed settled tables for fast repeated stepping. */
export interface Runtime {
  table: FlowTable;
  settled: SettledTable;
  columns: number;
}

/** Prepares a table for stepping (settles every cell once). */
export function createRuntime(t: FlowTable): Runtime {
  return { table: t, settled: settleAll(t), columns: countColumns(t.inputs.length) };
}

function popcount(x: number): number {
  let n = 0;
  while (x) {
    x &= x - 1;
    n++;
  }
  return n;
}

/** Outputs after settling into `cell`: specified bits of the stable cell, other bits held. */
function outputsAt(rt: Runtime, cell: number, previous: number): number {
  const care = rt.table.outCare[cell]!;
  return ((previous & ~care) | (rt.table.outValue[cell]! & care)) >>> 0;
}

/** Settles (state, column) through the precomputed table; NONE on a fault. */
function settledState(rt: Runtime, state: number, column: number): number {
  const cell = state * rt.columns + column;
  return rt.settled.fault[cell] === SETTLE_OK ? rt.settled.state[cell]! : NONE;
}

function faultReasonOf(rt: Runtime, state: number, column: number): FaultReason {
  return rt.settled.fault[state * rt.columns + column] === 2 ? 'oscillation' : 'unspecified';
}

/** Power-up: settle from the reset state in the snapshot's column. On failure the outputs are all 0. */
export function powerUp(rt: Runtime, column: number): EventOutcome {
  const r = rt.table.reset;
  const s = settledState(rt, r, column);
  if (s === NONE) return { next: { state: r, column, outputs: 0 }, fault: 'power-up', changed: 0 };
  return { next: { state: s, column, outputs: outputsAt(rt, s * rt.columns + column, 0) }, fault: 'none', changed: 0 };
}

/**
 * Outcome of flipping two bits (masks `a` then `b`) from (state, column) in each order and directly;
 * `agreed` is the common final state, or NONE when any outcome fails or two disagree.
 */
export function doubleChangeOutcomes(rt: Runtime, state: number, column: number, a: number, b: number): { ab: number; ba: number; direct: number; agreed: number } {
  const target = column ^ a ^ b;
  const viaA = settledState(rt, state, column ^ a);
  const viaB = settledState(rt, state, column ^ b);
  const ab = viaA === NONE ? NONE : settledState(rt, viaA, target);
  const ba = viaB === NONE ? NONE : settledState(rt, viaB, target);
  const direct = settledState(rt, state, target);
  const agreed = ab !== NONE && ab === ba && ab === direct ? direct : NONE;
  return { ab, ba, direct, agreed };
}

/** Applies one input snapshot (a column index) under the table's double-change policy. */
export function stepMachine(rt: Runtime, m: MachineState, column: number, policy: DoubleChangePolicy = rt.table.settings.doubleChange): EventOutcome {
  const diff = (m.column ^ column) >>> 0;
  const changed = popcount(diff);
  const hold = (fault: FaultReason): EventOutcome => ({ next: m, fault, changed });
  if (changed === 0) return { next: m, fault: 'none', changed };
  const land = (s: number): EventOutcome => ({
    next: { state: s, column, outputs: outputsAt(rt, s * rt.columns + column, m.outputs) },
    fault: 'none',
    changed,
  });
  if (changed === 1 || policy === 'direct') {
    const s = settledState(rt, m.state, column);
    return s === NONE ? hold(changed === 1 ? faultReasonOf(rt, m.state, column) : 'double-change') : land(s);
  }
  if (policy === 'fault') return hold('double-change');
  if (policy === 'guarded') {
    if (changed !== 2) return hold('double-change');
    const a = diff & -diff;
    const { agreed } = doubleChangeOutcomes(rt, m.state, m.column, a, diff ^ a);
    return agreed === NONE ? hold('double-change') : land(agreed);
  }
  // stepwise: lowest input index first, settling after each bit
  let s = m.state;
  let c = m.column;
  for (let k = 0; k < rt.table.inputs.length; k++) {
    if (!((diff >> k) & 1)) continue;
    c ^= 1 << k;
    s = settledState(rt, s, c);
    if (s === NONE) return hold('double-change');
  }
  return land(s);
}
