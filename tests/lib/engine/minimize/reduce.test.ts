/** The reduced table: names, verification, and property tests of the whole reduction. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cloneTable, countColumns, nameSchema, NONE, parseInterchange, tableToInterchange, type FlowTable } from '../../../../src/lib/engine/model';
import { createRuntime, powerUp, stepMachine, type EventOutcome, type Runtime } from '../../../../src/lib/engine/runtime';
import { settle } from '../../../../src/lib/engine/settle';
import { minimizeTable, nameClasses, verifyReduction, type MinimizeResult } from '../../../../src/lib/engine/minimize/index';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { isClosedCover, naiveCompatibility } from '../../../support/minimize-oracle';
import { gatedLatchTable } from '../../../support/worked-examples';

// Gated (D) latch: check-data/README.md worked example (Mano and Ciletti, textbook, encoded from memory)
const LATCH = gatedLatchTable();

describe('nameClasses', () => {
  it('keeps single names, joins members with "+", and stays within 64 characters and unique', () => {
    const long = 'x'.repeat(40);
    const states = ['idle', 'armed', `${long}1`, `${long}2`, 'a+b', 'a', 'b'];
    const names = nameClasses(states, [[0], [0, 1], [2, 3], [2, 3, 0], [4], [5, 6]]);
    expect(names[0]).toBe('idle');
    expect(names[1]).toBe('idle+armed');
    expect(names[2]).toBe(`${long}1+1`);
    expect(names[3]).toBe(`${long}1+2`);
    expect(names[4]).toBe('a+b');
    expect(names[5]).toBe('a+b~2');
    for (const n of names) expect(nameSchema.safeParse(n).success).toBe(true);
    expect(new Set(names).size).toBe(names.length);
  });
});

describe('verifyReduction', () => {
  const r = minimizeTable(LATCH);

  it('finds nothing wrong with a correct reduction', () => {
    expect(verifyReduction(LATCH, r.table, r.classes)).toEqual([]);
  });

  it('locates a next state that leaves the class of the original next state', () => {
    const bad = cloneTable(r.table);
    const cols = countColumns(2);
    // row a+c+d at 11 must go to the class of b; send it to a+c+d instead
    bad.next[0 * cols + 3] = 0;
    const p = verifyReduction(LATCH, bad, r.classes);
    expect(p.length).toBeGreaterThan(0);
    expect(p[0]!.where).toBe('rows["a+c+d"]["11"]');
    expect(p[0]!.message).toContain('"b"');
  });

  it('locates a lost or changed output bit and an unspecified cell', () => {
    const bad = cloneTable(r.table);
    const cols = countColumns(2);
    bad.outValue[1 * cols + 0] = 0; // b+e+f at 00 must give Q = 1 (state f)
    bad.next[1 * cols + 2] = NONE; // b+e+f at 01 must go to the class of a
    const p = verifyReduction(LATCH, bad, r.classes);
    expect(p.map((x) => x.where)).toEqual(expect.arrayContaining(['rows["b+e+f"]["00"]', 'rows["b+e+f"]["01"]']));
    expect(p.find((x) => x.where === 'rows["b+e+f"]["00"]')!.message).toContain('"Q"');
  });

  it('reports a state in no class, a wrong reset row, and a row count mismatch', () => {
    const p = verifyReduction(LATCH, r.table, [
      [1, 4, 5],
      [0, 2],
    ]);
    expect(p.map((x) => x.message)).toEqual(expect.arrayContaining(['state "d" is in no class']));
    expect(p.some((x) => x.where === 'reset')).toBe(true);
    expect(verifyReduction(LATCH, r.table, [[0, 1, 2, 3, 4, 5]])[0]!.where).toBe('states');
  });
});

/** The table with every specified cell going straight to its settled stable state (normal mode). */
function toNormalMode(t: FlowTable): FlowTable {
  const u = cloneTable(t);
  const cols = countColumns(t.inputs.length);
  for (let s = 0; s < t.states.length; s++) {
    for (let c = 0; c < cols; c++) {
      const cell = s * cols + c;
      if (t.next[cell] === NONE) continue;
      const r = settle(t, s, c);
      if (r.kind === 'stable') u.next[cell] = r.state;
      else {
        u.next[cell] = NONE;
        u.outCare[cell] = 0;
        u.outValue[cell] = 0;
      }
    }
  }
  return u;
}

/** Expects the reduced machine to track the original one: its row's class holds the state, and the specified outputs agree. */
function expectTracks(t: FlowTable, r: MinimizeResult, a: EventOutcome, b: EventOutcome): void {
  expect(b.fault).toBe('none');
  expect(b.next.column).toBe(a.next.column);
  expect(r.classes[b.next.state]).toContain(a.next.state);
  const care = t.outCare[a.next.state * countColumns(t.inputs.length) + a.next.column]!;
  expect((b.next.outputs & care) >>> 0).toBe((a.next.outputs & care) >>> 0);
}

/** Walks both machines through single-input changes from power-up while the original is specified. */
function walk(t: FlowTable, r: MinimizeResult, ro: Runtime, rr: Runtime, start: number, flips: number[]): void {
  let a = powerUp(ro, start);
  if (a.fault !== 'none') return;
  let b = powerUp(rr, start);
  expectTracks(t, r, a, b);
  for (const k of flips) {
    const column = a.next.column ^ (1 << k);
    const a2 = stepMachine(ro, a.next, column);
    if (a2.fault !== 'none') return;
    const b2 = stepMachine(rr, b.next, column);
    expectTracks(t, r, a2, b2);
    a = a2;
    b = b2;
  }
}

const tables = arbitraryTable({ maxStates: 8, maxInputs: 3 });

describe('minimizeTable (property tests on random tables)', () => {
  it('gives a valid closed cover, a verified reduction, never more rows, and valid names', () => {
    fc.assert(
      fc.property(tables, (t) => {
        const r = minimizeTable(t, { timeBudgetMs: 60_000 });
        expect(r.exact).toBe(true);
        expect(r.classes.length).toBeLessThanOrEqual(t.states.length);
        expect(r.stats.lowerBound).toBeLessThanOrEqual(r.classes.length);
        expect(r.table.states.length).toBe(r.classes.length);
        expect(isClosedCover(t, naiveCompatibility(t), r.classes)).toBe(true);
        expect(verifyReduction(t, r.table, r.classes)).toEqual([]);
        for (const c of r.classes) expect(c).toEqual([...c].sort((x, y) => x - y));
        // the reduced table is a valid interchange document (names, cells)
        expect(() => parseInterchange(JSON.parse(JSON.stringify(tableToInterchange(r.table))))).not.toThrow();
      }),
      { numRuns: 200 },
    );
  });

  it('is idempotent in row count', () => {
    fc.assert(
      fc.property(tables, (t) => {
        const once = minimizeTable(t, { timeBudgetMs: 60_000 });
        const twice = minimizeTable(once.table, { timeBudgetMs: 60_000 });
        expect(twice.classes.length).toBe(once.classes.length);
      }),
      { numRuns: 150 },
    );
  });

  it('steps like the original, cell by cell, wherever the original is specified', () => {
    fc.assert(
      fc.property(tables, fc.array(fc.nat(), { minLength: 1, maxLength: 30 }), fc.nat(), (t, columns, startPick) => {
        const r = minimizeTable(t, { timeBudgetMs: 60_000 });
        const cols = countColumns(t.inputs.length);
        let s = startPick % t.states.length;
        let x = r.classes.findIndex((c) => c.includes(s));
        for (const raw of columns) {
          const c = raw % cols;
          const a = s * cols + c;
          const b = x * cols + c;
          const care = t.outCare[a]!;
          expect((r.table.outCare[b]! & care) >>> 0).toBe(care);
          expect(((r.table.outValue[b]! ^ t.outValue[a]!) & care) >>> 0).toBe(0);
          if (t.next[a] === NONE) return;
          s = t.next[a]!;
          x = r.table.next[b]!;
          expect(r.classes[x]).toContain(s);
        }
      }),
      { numRuns: 150 },
    );
  });

  it('behaves like the original on single-input-change walks from power-up (normal-mode tables)', () => {
    // In normal mode every transition goes straight to a stable state; there a reduced row
    // whose members' next states lie in itself is stable, and the runtime settles in one step.
    fc.assert(
      fc.property(tables, fc.nat(), fc.array(fc.nat(), { minLength: 1, maxLength: 40 }), (raw, start, flips) => {
        const t = toNormalMode(raw);
        const r = minimizeTable(t, { timeBudgetMs: 60_000 });
        const cols = countColumns(t.inputs.length);
        walk(
          t,
          r,
          createRuntime(t),
          createRuntime(r.table),
          start % cols,
          flips.map((f) => f % t.inputs.length),
        );
      }),
      { numRuns: 200 },
    );
  });

  it('keeps the gated latch walks: every single-input change from power-up', () => {
    const r = minimizeTable(LATCH);
    for (let start = 0; start < 4; start++) {
      walk(LATCH, r, createRuntime(LATCH), createRuntime(r.table), start, [0, 1, 0, 1, 1, 0, 0, 1, 1, 1, 0, 0]);
    }
  });
});
