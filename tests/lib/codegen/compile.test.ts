/**
 * CompiledMachine: encodings and tables. The event algorithm of the generated C and Rust code is
 * mirrored here over the compiled arrays (one lookup per single-input change, fault codes past the
 * last state, packed outputs) and held against runtime.ts on random tables and walks, so the
 * encoding is checked far more widely than the compiler suites can afford.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { compileMachine, bitsFor, bitsForMask, type CompiledMachine } from '../../../src/lib/codegen/compile';
import { tableBytes } from '../../../src/lib/codegen/targets/common';
import { createTable, FlowTableError, interchangeToTable, keyToColumn, type FlowTable } from '../../../src/lib/engine/model';
import { createRuntime, FAULT_REASONS, powerUp, stepMachine, type MachineState } from '../../../src/lib/engine/runtime';
import { arbitraryTable } from '../../support/arbitrary-table';
import { loadDemoTables, randomWalk } from './support';

interface Emulated {
  state: number;
  inputs: number;
  outputs: number;
  fault: number;
}

/** The generated handler's algorithm, over the compiled arrays (mirrors templates/c/machine.c.hbs). */
function emulate(m: CompiledMachine) {
  const S = m.stateCount;
  const cell = (s: number, c: number) => (s << m.inputCount) | c;
  // `at` is the cell just looked up, or any cell settling in (s, c): the output table is indexed by it
  const land = (x: Emulated, s: number, c: number, at: number): void => {
    if (m.outputLayout === 'packed') {
      const code = m.outCode[at]!;
      x.outputs = ((x.outputs & (code >>> m.outputCount)) | (code & ((1 << m.outputCount) - 1))) >>> 0;
    } else if (m.outputLayout === 'split') x.outputs = ((x.outputs & m.outKeep[at]!) | m.outValue[at]!) >>> 0;
    x.state = s;
    x.inputs = c;
  };
  const init = (column: number): Emulated => {
    const x: Emulated = { state: m.reset, inputs: column, outputs: 0, fault: 0 };
    const s = m.next[cell(m.reset, column)]!;
    if (s < S) land(x, s, column, cell(m.reset, column));
    else x.fault = 4;
    return x;
  };
  const event = (x: Emulated, column: number): void => {
    const diff = x.inputs ^ column;
    x.fault = 0;
    if (diff === 0) return;
    if ((diff & (diff - 1)) === 0) {
      const s = m.next[cell(x.state, column)]!;
      if (s < S) land(x, s, column, cell(x.state, column));
      else x.fault = s - (S - 1);
      return;
    }
    if (m.policy === 'fault') x.fault = 3;
    else if (m.policy === 'direct') {
      const s = m.next[cell(x.state, column)]!;
      if (s < S) land(x, s, column, cell(x.state, column));
      else x.fault = 3;
    } else if (m.policy === 'guarded') {
      const rest = diff & (diff - 1);
      x.fault = 3;
      if ((rest & (rest - 1)) === 0) {
        const first = diff ^ rest;
        const direct = m.next[cell(x.state, column)]!;
        const a = m.next[cell(x.state, x.inputs ^ first)]!;
        const b = m.next[cell(x.state, x.inputs ^ rest)]!;
        if (direct < S && a < S && b < S && m.next[cell(a, column)] === direct && m.next[cell(b, column)] === direct) {
          land(x, direct, column, cell(x.state, column));
          x.fault = 0;
        }
      }
    } else {
      let s = x.state;
      let c = x.inputs;
      for (let k = 0; k < m.inputCount && s < S; k++) {
        if ((diff >> k) & 1) {
          c ^= 1 << k;
          s = m.next[cell(s, c)]!;
        }
      }
      if (s < S) land(x, s, column, cell(s, column));
      else x.fault = 3;
    }
  };
  return { init, event };
}

function sameAsRuntime(t: FlowTable, walk: number[]): void {
  const m = compileMachine(t);
  const em = emulate(m);
  const rt = createRuntime(t);
  let o = powerUp(rt, walk[0]!);
  let ms: MachineState = o.next;
  const x = em.init(walk[0]!);
  const view = (s: MachineState, fault: number) => ({ state: s.state, inputs: s.column, outputs: s.outputs, fault });
  expect(x).toEqual(view(ms, FAULT_REASONS.indexOf(o.fault)));
  for (const c of walk.slice(1)) {
    o = stepMachine(rt, ms, c);
    ms = o.next;
    em.event(x, c);
    expect(x).toEqual(view(ms, FAULT_REASONS.indexOf(o.fault)));
  }
}

describe('compileMachine', () => {
  it('the compiled tables drive the generated algorithm exactly like runtime.ts (random tables, random walks)', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxInputs: 4, maxOutputs: 18, maxStates: 10 }), fc.integer({ min: 0, max: 1e6 }), (t, seed) => {
        sameAsRuntime(t, randomWalk(t, seed, 60).map(keyToColumn));
      }),
      { numRuns: 150, seed: 20240611 },
    );
  });

  it('the demo tables under every policy match runtime.ts on long walks', () => {
    for (const { table } of loadDemoTables())
      for (const policy of ['guarded', 'fault', 'stepwise', 'direct'] as const) {
        const t = { ...table, settings: { ...table.settings, doubleChange: policy } };
        sameAsRuntime(t, randomWalk(t, 99, 2000).map(keyToColumn));
      }
  });

  it('uses the smallest unsigned types, with room for the two fault codes', () => {
    expect(bitsFor(255)).toBe(8);
    expect(bitsFor(256)).toBe(16);
    expect(bitsFor(65536)).toBe(32);
    expect(bitsForMask(1)).toBe(8);
    expect(bitsForMask(9)).toBe(16);
    expect(bitsForMask(17)).toBe(32);
    const states = (n: number) => Array.from({ length: n }, (_, i) => `s${i}`);
    // 254 states + 2 fault codes fit a byte; 255 do not
    expect(compileMachine(createTable({ name: 'a', inputs: ['x'], outputs: [], states: states(254) })).stateBits).toBe(8);
    expect(compileMachine(createTable({ name: 'a', inputs: ['x'], outputs: [], states: states(255) })).stateBits).toBe(16);
  });

  it('encodes unspecified and oscillating settling as the two codes past the last state', () => {
    // invented: state a is stable at 0; at 1, a -> b -> a loops; b at 0 is unspecified
    const t = interchangeToTable({
      format: 'quiesce-flow-table',
      version: 1,
      name: 'codes',
      inputs: ['x'],
      outputs: ['y'],
      states: ['a', 'b'],
      reset: 'a',
      rows: { a: { '0': 'a/1', '1': 'b/0' }, b: { '1': 'a/-' } },
    });
    const m = compileMachine(t);
    expect(m.faultCodes).toEqual({ unspecified: 2, oscillation: 3 });
    expect(m.next).toEqual([0, 3, 2, 3]);
    // one output: value in bit 0, keep (left open) in bit 1; only (a, 0) settles, and it specifies y = 1
    expect(m.outputLayout).toBe('packed');
    expect(m.outCode).toEqual([0b01, 0, 0, 0]);
  });

  it('packs care and value into one word up to 16 outputs, two arrays above', () => {
    const mk = (outputs: number) =>
      compileMachine(createTable({ name: 'w', inputs: ['x'], outputs: Array.from({ length: outputs }, (_, i) => `o${i}`), states: ['s'] }));
    expect(mk(0).outputLayout).toBe('none');
    expect(mk(4)).toMatchObject({ outputLayout: 'packed', outCodeBits: 8, outputBits: 8 });
    expect(mk(5)).toMatchObject({ outputLayout: 'packed', outCodeBits: 16, outputBits: 8 });
    expect(mk(16)).toMatchObject({ outputLayout: 'packed', outCodeBits: 32, outputBits: 16 });
    expect(mk(17)).toMatchObject({ outputLayout: 'split', outputBits: 32 });
  });

  it('table bytes are states x columns x (1 byte of next state + the packed output bytes) for the demo tables', () => {
    for (const { table } of loadDemoTables()) {
      const m = compileMachine(table);
      expect(tableBytes(m)).toBe(table.states.length * (1 << table.inputs.length) * (1 + 1));
    }
  });

  it('refuses a table without inputs, and a scenario vector of the wrong width, with located errors', () => {
    expect(() => compileMachine(createTable({ name: 'z', inputs: [], outputs: [], states: ['s'] }))).toThrow(FlowTableError);
    const t = createTable({ name: 'z', inputs: ['a', 'b'], outputs: [], states: ['s'], scenarios: [{ name: 'short', inputs: ['00', '1'] }] });
    try {
      compileMachine(t);
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(FlowTableError);
      expect((e as FlowTableError).issues[0]!.where).toBe('scenarios[0].inputs[1]');
    }
  });

  it('test vectors: power-up in every column, a tour covering every single-input change, and faults that hold', () => {
    for (const { table } of loadDemoTables()) {
      const v = compileMachine(table).vectors;
      expect(v.powerUp).toHaveLength(1 << table.inputs.length);
      expect(v.tourCovers).toBe(v.tourTotal);
      expect(v.tourTotal).toBeGreaterThan(0);
      expect(v.scenarios).toHaveLength(table.scenarios.length);
      for (const f of [...v.faults, ...v.doubleChanges.filter((d) => d.fault !== 0)]) expect(f.expect).toEqual(f.from);
    }
  });
});
