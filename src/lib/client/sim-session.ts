/**
 * A simulator run on the run-time contract (engine/runtime.ts): power-up, then one input
 * snapshot per event, with the settle path through transient cells recorded for animation.
 * It follows exactly what the generated firmware does, including double-change policies.
 */
import { columnToKey, DOUBLE_CHANGE_POLICIES, type DoubleChangePolicy, type FlowTable } from '../engine/model';
import { createRuntime, powerUp, stepMachine, type FaultReason, type MachineState, type Runtime } from '../engine/runtime';
import { settle } from '../engine/settle';

/** One event of a run. */
export interface SimEvent {
  /** Column index of the snapshot. */
  column: number;
  key: string;
  /** Number of bits that changed (0 for power-up). */
  changed: number;
  fault: FaultReason;
  /** States visited in the new column, from the held state to where it ended (transients included). */
  path: number[];
  after: MachineState;
}

/** A whole run: the runtime it was made with and its events, power-up first. */
export interface SimRun {
  runtime: Runtime;
  policy: DoubleChangePolicy;
  events: SimEvent[];
}

/** Settle path for display: the states passed through when moving from `from` into `column`. */
function pathOf(rt: Runtime, from: MachineState, column: number, policy: DoubleChangePolicy): number[] {
  const diff = from.column ^ column;
  if (diff === 0) return [from.state];
  const single = (diff & (diff - 1)) === 0;
  if (single || policy === 'direct' || policy === 'guarded') {
    const r = settle(rt.table, from.state, column);
    return r.path;
  }
  if (policy === 'fault') return [from.state];
  const path: number[] = [from.state];
  let s = from.state;
  let c = from.column;
  for (let k = 0; k < rt.table.inputs.length; k++) {
    if (!((diff >> k) & 1)) continue;
    c ^= 1 << k;
    const r = settle(rt.table, s, c);
    path.push(...r.path.slice(1));
    if (r.kind !== 'stable') break;
    s = r.state;
  }
  return path;
}

/** Starts a run by powering up with the given column. */
export function startRun(t: FlowTable, column: number, policy: DoubleChangePolicy = t.settings.doubleChange): SimRun {
  const runtime = createRuntime(t);
  const o = powerUp(runtime, column);
  const r = settle(t, t.reset, column);
  return { runtime, policy, events: [{ column, key: columnToKey(column, t.inputs.length), changed: 0, fault: o.fault, path: r.path, after: o.next }] };
}

/** Applies one snapshot to the run and returns the extended run (the argument is not changed). */
export function stepRun(run: SimRun, column: number): SimRun {
  const last = run.events[run.events.length - 1]!;
  const o = stepMachine(run.runtime, last.after, column, run.policy);
  const path = pathOf(run.runtime, last.after, column, run.policy);
  const ev: SimEvent = { column, key: columnToKey(column, run.runtime.table.inputs.length), changed: o.changed, fault: o.fault, path, after: o.next };
  return { ...run, events: [...run.events, ev] };
}

/** Replays a saved scenario (first vector = power-up). */
export function replayScenario(t: FlowTable, vectors: string[], policy?: DoubleChangePolicy): SimRun {
  const toColumn = (k: string) => {
    let c = 0;
    for (let i = 0; i < k.length; i++) if (k[i] === '1') c |= 1 << i;
    return c;
  };
  let run = startRun(t, toColumn(vectors[0] ?? ''), policy);
  for (const v of vectors.slice(1)) run = stepRun(run, toColumn(v));
  return run;
}

/** The input vectors of a run, as a scenario stores them. */
export function runToVectors(run: SimRun): string[] {
  return run.events.map((e) => e.key);
}

/** The input column the machine sees now: the last snapshot (held even when it faulted). */
export function currentColumn(run: SimRun): number {
  return run.events[run.events.length - 1]!.column;
}

/** Output bits of a machine state as a string, one character per output. */
export function outputsToBits(outputs: number, count: number): string {
  let s = '';
  for (let k = 0; k < count; k++) s += (outputs >>> k) & 1 ? '1' : '0';
  return s;
}

export { DOUBLE_CHANGE_POLICIES };
