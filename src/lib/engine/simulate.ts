/**
 * Simulation: power-up, then one event per input vector, exactly as runtime.ts (and so the
 * generated firmware) handles them, with the settle path of each event for display.
 */
import { cellBits, columnToKey, countColumns, doubleChangePolicySchema, FlowTableError, keyToColumn, type DoubleChangePolicy, type EngineIssue, type FlowTable } from './model';
import { createRuntime, powerUp, stepMachine, type FaultReason, type MachineState } from './runtime';
import { createTracer } from './analyze';
import type { PathStep } from './findings';

/** Most vectors one simulation accepts. */
export const MAX_VECTORS = 10000;

/** How an event was handled: power-up, no change, a single-input change, or a double-change policy. */
export type AppliedPolicy = 'power-up' | 'unchanged' | 'single' | DoubleChangePolicy;

/** One simulated event. */
export interface SimulationStep {
  /** The input vector (column key) of this event. */
  inputs: string;
  /** Input bits that differ from the held column (0 at power-up). */
  changed: number;
  policy: AppliedPolicy;
  /** Cells visited, with their output bits over `0 1 -`; for stepwise, the per-bit paths in order. */
  path: PathStep[];
  /** The held state after the event. */
  state: string;
  /** The held column after the event (a fault keeps the previous one). */
  column: string;
  /** Output pins after the event, one `0`/`1` per output. */
  outputs: string;
  fault: FaultReason;
}

/** A simulation run. */
export interface Simulation {
  policy: DoubleChangePolicy;
  steps: SimulationStep[];
}

/** Options of simulateTable. */
export interface SimulateOptions {
  /** Double-change policy; the table's setting when absent. */
  policy?: DoubleChangePolicy;
}

/** Checks vectors and the policy; throws FlowTableError with each problem located (`inputs[3]`, `policy`). */
export function validateVectors(t: FlowTable, vectors: unknown, policy?: unknown): void {
  const issues: EngineIssue[] = [];
  const n = t.inputs.length;
  if (policy !== undefined && !doubleChangePolicySchema.safeParse(policy).success)
    issues.push({ where: 'policy', message: `unknown double-change policy ${JSON.stringify(policy)}`, hint: `one of ${doubleChangePolicySchema.options.join(', ')}` });
  if (!Array.isArray(vectors)) issues.push({ where: 'inputs', message: 'the input vectors must be a list of strings' });
  else if (vectors.length === 0) issues.push({ where: 'inputs', message: 'at least one input vector (the power-up inputs) is needed' });
  else if (vectors.length > MAX_VECTORS) issues.push({ where: 'inputs', message: `at most ${MAX_VECTORS} input vectors, got ${vectors.length}` });
  else {
    const re = new RegExp(`^[01]{${n}}$`);
    vectors.forEach((v, i) => {
      if (issues.length >= 20) return;
      if (typeof v !== 'string' || !re.test(v))
        issues.push({
          where: `inputs[${i}]`,
          message: `${typeof v === 'string' ? JSON.stringify(v) : String(v)} is not ${n} character${n === 1 ? '' : 's'} of 0 and 1`,
          hint: `one character per input, in the order ${t.inputs.join(' ') || '(no inputs)'}`,
        });
    });
  }
  if (issues.length) throw new FlowTableError(issues);
}

function outputsToBits(outputs: number, count: number): string {
  let s = '';
  for (let k = 0; k < count; k++) s += (outputs >>> k) & 1 ? '1' : '0';
  return s;
}

function countBits(x: number): number {
  let c = 0;
  for (; x; x &= x - 1) c++;
  return c;
}

/**
 * Runs power-up on the first vector and one event per following vector. The final state, column,
 * outputs and fault of each step come from runtime.ts (`powerUp`, `stepMachine`); the path is traced
 * beside it.
 */
export function simulateTable(t: FlowTable, vectors: string[], options: SimulateOptions = {}): Simulation {
  validateVectors(t, vectors, options.policy);
  const policy = options.policy ?? t.settings.doubleChange;
  const rt = createRuntime(t);
  const n = t.inputs.length;
  const m = t.outputs.length;
  const cols = countColumns(n);
  const steps: SimulationStep[] = [];
  const trace = createTracer(t);
  const record = (inputs: string, changed: number, applied: AppliedPolicy, path: PathStep[], ms: MachineState, fault: FaultReason): void => {
    steps.push({ inputs, changed, policy: applied, path, state: t.states[ms.state]!, column: columnToKey(ms.column, n), outputs: outputsToBits(ms.outputs, m), fault });
  };
  const first = keyToColumn(vectors[0]!);
  const up = powerUp(rt, first);
  record(vectors[0]!, 0, 'power-up', trace(t.reset, first).steps, up.next, up.fault);
  let machine = up.next;
  for (let i = 1; i < vectors.length; i++) {
    const column = keyToColumn(vectors[i]!);
    const out = stepMachine(rt, machine, column, policy);
    const diff = (machine.column ^ column) >>> 0;
    const changed = countBits(diff);
    const start = { state: machine.state, column: machine.column };
    let applied: AppliedPolicy;
    let path: PathStep[];
    if (changed === 0) {
      applied = 'unchanged';
      path = [makeHeldStep(t, cols, machine.state, machine.column)];
    } else if (changed === 1 || policy === 'direct') {
      applied = changed === 1 ? 'single' : 'direct';
      path = trace(machine.state, column, start).steps;
    } else if (policy === 'fault') {
      applied = 'fault';
      path = [makeHeldStep(t, cols, machine.state, machine.column)];
    } else if (policy === 'guarded') {
      applied = 'guarded';
      path = out.fault === 'none' ? trace(machine.state, column, start).steps : [makeHeldStep(t, cols, machine.state, machine.column)];
    } else {
      applied = 'stepwise';
      path = [makeHeldStep(t, cols, machine.state, machine.column)];
      let s = machine.state;
      let c = machine.column;
      for (let k = 0; k < n; k++) {
        if (!((diff >> k) & 1)) continue;
        c ^= 1 << k;
        const tr = trace(s, c);
        for (const p of tr.steps) path.push(p.kind === 'start' ? { ...p, kind: 'transient' } : p);
        if (tr.end !== 'stable') break;
        s = tr.state;
      }
    }
    record(vectors[i]!, changed, applied, path, out.next, out.fault);
    machine = out.next;
  }
  return { policy, steps };
}

/** The held total state as the single `start` step of an event that does not move. */
function makeHeldStep(t: FlowTable, cols: number, state: number, column: number): PathStep {
  return { state: t.states[state]!, inputs: columnToKey(column, t.inputs.length), kind: 'start', outputs: cellBits(t, state * cols + column) };
}
