/** Helpers shared by the format tests. */
import { expect } from 'vitest';
import { countColumns, createTable, FlowTableError, type FlowTable } from '../../src/lib/engine/model';

/** Runs `fn`, expects a FlowTableError, and returns its issues as `where: message` lines. */
export function issuesOf(fn: () => unknown): string[] {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(FlowTableError);
    return (e as FlowTableError).issues.map((i) => `${i.where}: ${i.message}`);
  }
  throw new Error('expected a FlowTableError');
}

/** Runs `fn` and expects it to either return or throw a FlowTableError whose every issue is located. */
export function expectLocatedOrOk(fn: () => unknown): void {
  try {
    fn();
  } catch (e) {
    if (!(e instanceof FlowTableError)) throw new Error(`expected a FlowTableError, got ${e instanceof Error ? `${e.name}: ${e.message}` : String(e)}`);
    expect(e.issues.length).toBeGreaterThan(0);
    for (const i of e.issues) expect(i.where).toMatch(/^\d+:\d+$|^[A-Za-z(]/);
  }
}

/** The same table with its states in another order (`order[k]` = old index of new state k). */
export function reorderStates(t: FlowTable, order: number[]): FlowTable {
  const cols = countColumns(t.inputs.length);
  const newIndex = new Map(order.map((old, k) => [old, k] as const));
  const r = createTable({
    name: t.name,
    inputs: t.inputs,
    outputs: t.outputs,
    states: order.map((i) => t.states[i]!),
    reset: newIndex.get(t.reset)!,
    ...(t.description !== undefined ? { description: t.description } : {}),
    settings: t.settings,
    scenarios: t.scenarios,
  });
  order.forEach((old, k) => {
    for (let c = 0; c < cols; c++) {
      const from = old * cols + c;
      const to = k * cols + c;
      const nx = t.next[from]!;
      r.next[to] = nx < 0 ? nx : newIndex.get(nx)!;
      r.outCare[to] = t.outCare[from]!;
      r.outValue[to] = t.outValue[from]!;
    }
  });
  return r;
}

/** Lines that differ between two texts of the same line count (for one-line-diff checks). */
export function changedLines(a: string, b: string): number {
  const la = a.split('\n');
  const lb = b.split('\n');
  expect(la.length).toBe(lb.length);
  return la.filter((l, i) => l !== lb[i]).length;
}
