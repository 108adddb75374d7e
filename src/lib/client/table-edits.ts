/**
 * Pure, immutable edits of a FlowTable: what the grid, the settings panel and the fix actions
 * dispatch. Each edit returns a new table and never mutates its argument, so undo can keep
 * the previous table as it is.
 */
import { cloneTable, countColumns, createTable, LIMITS, nameSchema, NONE, setCellBits, cellBits, type FlowTable, type Settings, type Scenario } from '../engine/model';

/** One edit of a table, as data (so it can be logged, tested and replayed). */
export type TableEdit =
  | { kind: 'set-cell'; state: number; column: number; next: number; bits: string | null }
  | { kind: 'set-next'; state: number; column: number; next: number }
  | { kind: 'set-bits'; state: number; column: number; bits: string }
  | { kind: 'clear-cell'; state: number; column: number }
  | { kind: 'add-state'; name: string; at?: number }
  | { kind: 'rename-state'; index: number; name: string }
  | { kind: 'move-state'; from: number; to: number }
  | { kind: 'delete-state'; index: number }
  | { kind: 'set-reset'; index: number }
  | { kind: 'add-input'; name: string }
  | { kind: 'rename-input'; index: number; name: string }
  | { kind: 'move-input'; from: number; to: number }
  | { kind: 'delete-input'; index: number }
  | { kind: 'add-output'; name: string }
  | { kind: 'rename-output'; index: number; name: string }
  | { kind: 'move-output'; from: number; to: number }
  | { kind: 'delete-output'; index: number }
  | { kind: 'set-name'; name: string }
  | { kind: 'set-description'; description: string }
  | { kind: 'set-settings'; settings: Partial<Settings> }
  | { kind: 'add-scenario'; scenario: Scenario }
  | { kind: 'delete-scenario'; index: number };

/** Raised for an edit that would make the table invalid; the message is shown to the user as is. */
export class EditError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'EditError';
  }
}

/** Checks a new state, input or output name against the model rules and its siblings; returns a message or null. */
export function checkName(name: string, siblings: string[], what: string, self = -1): string | null {
  const r = nameSchema.safeParse(name);
  if (!r.success) return r.error.issues[0]?.message ?? 'invalid name';
  if (what === 'state' && name === '-') return 'a state cannot be named "-": it marks an unspecified cell';
  const i = siblings.indexOf(name);
  if (i >= 0 && i !== self) return `there is already ${what === 'input' ? 'an' : 'a'} ${what} named "${name}"`;
  return null;
}

/** Proposes a fresh name `base1`, `base2`, … not used in `taken`. */
export function proposeName(base: string, taken: string[]): string {
  const set = new Set(taken);
  for (let i = taken.length + 1; ; i++) if (!set.has(`${base}${i}`)) return `${base}${i}`;
}

function ensureName(name: string, siblings: string[], what: string, self = -1): void {
  const problem = checkName(name, siblings, what, self);
  if (problem) throw new EditError(problem);
}

function moveItem<T>(xs: T[], from: number, to: number): T[] {
  const out = [...xs];
  const [x] = out.splice(from, 1);
  out.splice(to, 0, x as T);
  return out;
}

/** Rebuilds a table with new states/inputs/outputs, mapping every new cell from an old one (or leaving it empty). */
function rebuild(
  t: FlowTable,
  shape: { states: string[]; inputs: string[]; outputs: string[]; reset: number },
  map: {
    state: (newState: number) => number;
    column: (newColumn: number) => number;
    next: (oldNext: number) => number;
    bits: (care: number, value: number) => [number, number];
    /** How a scenario's input vector (character k = input k) follows a change of the inputs. */
    vector?: (vector: string) => string;
  },
): FlowTable {
  const out = createTable({
    name: t.name,
    ...(t.description !== undefined ? { description: t.description } : {}),
    inputs: shape.inputs,
    outputs: shape.outputs,
    states: shape.states,
    reset: shape.reset,
    settings: t.settings,
    scenarios: map.vector ? t.scenarios.map((sc) => ({ name: sc.name, inputs: sc.inputs.map(map.vector!) })) : t.scenarios,
  });
  const oldCols = countColumns(t.inputs.length);
  const cols = countColumns(shape.inputs.length);
  for (let s = 0; s < shape.states.length; s++) {
    const os = map.state(s);
    if (os < 0) continue;
    for (let c = 0; c < cols; c++) {
      const oc = map.column(c);
      if (oc < 0) continue;
      const from = os * oldCols + oc;
      const to = s * cols + c;
      const n = t.next[from]!;
      out.next[to] = n === NONE ? NONE : map.next(n);
      if (out.next[to] === NONE) continue;
      const [care, value] = map.bits(t.outCare[from]!, t.outValue[from]!);
      out.outCare[to] = care >>> 0;
      out.outValue[to] = value >>> 0;
    }
  }
  return out;
}

const sameBits = (care: number, value: number): [number, number] => [care, value];

/** Moves bit `from` of x to position `to`, shifting the bits in between (the bit analogue of moveItem). */
function moveBit(x: number, from: number, to: number, width: number): number {
  const bits: number[] = [];
  for (let k = 0; k < width; k++) bits.push((x >>> k) & 1);
  const moved = moveItem(bits, from, to);
  let y = 0;
  moved.forEach((b, k) => (y |= b << k));
  return y >>> 0;
}

/** Removes bit `k` of x, shifting higher bits down. */
function dropBit(x: number, k: number): number {
  const low = x & ((1 << k) - 1);
  const high = k >= 31 ? 0 : (x >>> (k + 1)) << k;
  return (low | high) >>> 0;
}

/** Applies one edit and returns the new table; throws EditError for an edit that the model does not allow. */
export function applyEdit(t: FlowTable, e: TableEdit): FlowTable {
  const cols = countColumns(t.inputs.length);
  const identity = (i: number) => i;
  switch (e.kind) {
    case 'set-cell':
    case 'set-next':
    case 'set-bits':
    case 'clear-cell': {
      if (e.state < 0 || e.state >= t.states.length || e.column < 0 || e.column >= cols) throw new EditError('no such cell');
      const out = cloneTable(t);
      const cell = e.state * cols + e.column;
      if (e.kind === 'clear-cell') {
        out.next[cell] = NONE;
        out.outCare[cell] = 0;
        out.outValue[cell] = 0;
        return out;
      }
      if (e.kind === 'set-cell' || e.kind === 'set-next') {
        if (e.next !== NONE && (e.next < 0 || e.next >= t.states.length)) throw new EditError('no such next state');
        out.next[cell] = e.next;
        if (e.next === NONE) {
          out.outCare[cell] = 0;
          out.outValue[cell] = 0;
          return out;
        }
      }
      const bits = e.kind === 'set-cell' ? e.bits : e.kind === 'set-bits' ? e.bits : null;
      if (bits !== null) {
        if (!new RegExp(`^[01-]{${t.outputs.length}}$`).test(bits)) throw new EditError(`output bits are ${t.outputs.length} characters of 0, 1 and -`);
        if (out.next[cell] === NONE) throw new EditError('give the cell a next state before its outputs');
        setCellBits(out, cell, bits);
      }
      return out;
    }
    case 'add-state': {
      if (t.states.length >= LIMITS.states) throw new EditError(`a table has at most ${LIMITS.states} states`);
      ensureName(e.name, t.states, 'state');
      const at = Math.max(0, Math.min(e.at ?? t.states.length, t.states.length));
      const states = [...t.states];
      states.splice(at, 0, e.name);
      const oldOf = (s: number) => (s < at ? s : s === at ? -1 : s - 1);
      const newOf = (s: number) => (s < at ? s : s + 1);
      return rebuild(t, { states, inputs: t.inputs, outputs: t.outputs, reset: newOf(t.reset) }, { state: oldOf, column: identity, next: newOf, bits: sameBits });
    }
    case 'rename-state': {
      if (!Number.isInteger(e.index) || e.index < 0 || e.index >= t.states.length) throw new EditError('no such state');
      ensureName(e.name, t.states, 'state', e.index);
      const out = cloneTable(t);
      out.states[e.index] = e.name;
      return out;
    }
    case 'move-state': {
      if (e.from === e.to) return t;
      const order = moveItem(t.states.map((_, i) => i), e.from, e.to); // order[new] = old
      const newOf = new Map(order.map((old, nw) => [old, nw] as const));
      return rebuild(
        t,
        { states: order.map((o) => t.states[o]!), inputs: t.inputs, outputs: t.outputs, reset: newOf.get(t.reset)! },
        { state: (s) => order[s]!, column: identity, next: (n) => newOf.get(n)!, bits: sameBits },
      );
    }
    case 'delete-state': {
      if (t.states.length <= 1) throw new EditError('a table needs at least one state');
      const at = e.index;
      const states = t.states.filter((_, i) => i !== at);
      const newOf = (s: number) => (s === at ? NONE : s < at ? s : s - 1);
      const reset = t.reset === at ? 0 : newOf(t.reset);
      return rebuild(t, { states, inputs: t.inputs, outputs: t.outputs, reset }, { state: (s) => (s < at ? s : s + 1), column: identity, next: newOf, bits: sameBits });
    }
    case 'set-reset': {
      if (e.index < 0 || e.index >= t.states.length) throw new EditError('no such state');
      return { ...cloneTable(t), reset: e.index };
    }
    case 'add-input': {
      if (t.inputs.length >= LIMITS.inputs) throw new EditError(`a table has at most ${LIMITS.inputs} inputs`);
      ensureName(e.name, t.inputs, 'input');
      const k = t.inputs.length;
      // The old behaviour is kept where the new input is 0; the new half of the table starts unspecified.
      return rebuild(t, { states: t.states, inputs: [...t.inputs, e.name], outputs: t.outputs, reset: t.reset }, {
        state: identity,
        column: (c) => ((c >> k) & 1 ? -1 : c),
        next: identity,
        bits: sameBits,
        vector: (v) => `${v}0`, // the new input starts at 0 in every saved run
      });
    }
    case 'rename-input': {
      if (!Number.isInteger(e.index) || e.index < 0 || e.index >= t.inputs.length) throw new EditError('no such input');
      ensureName(e.name, t.inputs, 'input', e.index);
      const out = cloneTable(t);
      out.inputs[e.index] = e.name;
      return out;
    }
    case 'move-input': {
      if (e.from === e.to) return t;
      const n = t.inputs.length;
      // new column c has new bit j = old bit order[j]; map back by the inverse move
      return rebuild(
        t,
        { states: t.states, inputs: moveItem(t.inputs, e.from, e.to), outputs: t.outputs, reset: t.reset },
        { state: identity, column: (c) => moveBit(c, e.to, e.from, n), next: identity, bits: sameBits, vector: (v) => moveItem([...v], e.from, e.to).join('') },
      );
    }
    case 'delete-input': {
      const k = e.index;
      // Keeps the half of the table where the deleted input is 0.
      return rebuild(
        t,
        { states: t.states, inputs: t.inputs.filter((_, i) => i !== k), outputs: t.outputs, reset: t.reset },
        { state: identity, column: (c) => (c & ((1 << k) - 1)) | ((c >> k) << (k + 1)), next: identity, bits: sameBits, vector: (v) => v.slice(0, k) + v.slice(k + 1) },
      );
    }
    case 'add-output': {
      if (t.outputs.length >= LIMITS.outputs) throw new EditError(`a table has at most ${LIMITS.outputs} outputs`);
      ensureName(e.name, t.outputs, 'output');
      const out = cloneTable(t);
      out.outputs.push(e.name);
      return out;
    }
    case 'rename-output': {
      if (!Number.isInteger(e.index) || e.index < 0 || e.index >= t.outputs.length) throw new EditError('no such output');
      ensureName(e.name, t.outputs, 'output', e.index);
      const out = cloneTable(t);
      out.outputs[e.index] = e.name;
      return out;
    }
    case 'move-output': {
      if (e.from === e.to) return t;
      const m = t.outputs.length;
      return rebuild(
        t,
        { states: t.states, inputs: t.inputs, outputs: moveItem(t.outputs, e.from, e.to), reset: t.reset },
        { state: identity, column: identity, next: identity, bits: (care, value) => [moveBit(care, e.from, e.to, m), moveBit(value, e.from, e.to, m)] },
      );
    }
    case 'delete-output': {
      const k = e.index;
      return rebuild(
        t,
        { states: t.states, inputs: t.inputs, outputs: t.outputs.filter((_, i) => i !== k), reset: t.reset },
        { state: identity, column: identity, next: identity, bits: (care, value) => [dropBit(care, k), dropBit(value, k)] },
      );
    }
    case 'set-name': {
      ensureName(e.name, [], 'table');
      return { ...cloneTable(t), name: e.name };
    }
    case 'set-description': {
      const out = cloneTable(t);
      if (e.description.trim() === '') delete out.description;
      else out.description = e.description;
      return out;
    }
    case 'set-settings': {
      const out = cloneTable(t);
      out.settings = { ...out.settings, ...e.settings };
      if (!out.settings.prefix) delete out.settings.prefix;
      return out;
    }
    case 'add-scenario': {
      const out = cloneTable(t);
      const i = out.scenarios.findIndex((s) => s.name === e.scenario.name);
      const sc = { name: e.scenario.name, inputs: [...e.scenario.inputs] };
      if (i >= 0) out.scenarios[i] = sc;
      else out.scenarios.push(sc);
      return out;
    }
    case 'delete-scenario': {
      const out = cloneTable(t);
      out.scenarios.splice(e.index, 1);
      return out;
    }
  }
}

/** A short human label of an edit, for the undo/redo buttons' titles. */
export function describeEdit(t: FlowTable, e: TableEdit): string {
  switch (e.kind) {
    case 'set-cell':
    case 'set-next':
    case 'set-bits':
    case 'clear-cell':
      return `edit cell ${t.states[e.state] ?? '?'} @ ${columnLabel(t, e.column)}`;
    case 'add-state':
      return `add state ${e.name}`;
    case 'rename-state':
      return `rename state ${t.states[e.index] ?? '?'} to ${e.name}`;
    case 'move-state':
      return `move state ${t.states[e.from] ?? '?'}`;
    case 'delete-state':
      return `delete state ${t.states[e.index] ?? '?'}`;
    case 'set-reset':
      return `reset state ${t.states[e.index] ?? '?'}`;
    case 'add-input':
      return `add input ${e.name}`;
    case 'rename-input':
      return `rename input ${t.inputs[e.index] ?? '?'}`;
    case 'move-input':
      return `move input ${t.inputs[e.from] ?? '?'}`;
    case 'delete-input':
      return `delete input ${t.inputs[e.index] ?? '?'}`;
    case 'add-output':
      return `add output ${e.name}`;
    case 'rename-output':
      return `rename output ${t.outputs[e.index] ?? '?'}`;
    case 'move-output':
      return `move output ${t.outputs[e.from] ?? '?'}`;
    case 'delete-output':
      return `delete output ${t.outputs[e.index] ?? '?'}`;
    case 'set-name':
      return 'rename table';
    case 'set-description':
      return 'edit description';
    case 'set-settings':
      return 'change settings';
    case 'add-scenario':
      return `save scenario ${e.scenario.name}`;
    case 'delete-scenario':
      return 'delete scenario';
  }
}

/** Column index to its key (character k is inputs[k]), e.g. for labels. */
export function columnLabel(t: FlowTable, column: number): string {
  let s = '';
  for (let k = 0; k < t.inputs.length; k++) s += (column >> k) & 1 ? '1' : '0';
  return s;
}

/** The cell's text as the grid shows it: next state name (or `-`) and output bits. */
export function cellDisplay(t: FlowTable, cell: number): { next: string | null; bits: string } {
  const n = t.next[cell]!;
  return { next: n === NONE ? null : t.states[n]!, bits: n === NONE ? '' : cellBits(t, cell) };
}
