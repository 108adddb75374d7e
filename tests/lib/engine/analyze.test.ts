import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cloneTable, columnToKey, interchangeToTable, keyToColumn, type FlowTable } from '../../../src/lib/engine/model';
import { createRuntime, doubleChangeOutcomes } from '../../../src/lib/engine/runtime';
import { analyzeTable, type Analysis } from '../../../src/lib/engine/analyze';
import { findingSchema, findingToKey, type Finding } from '../../../src/lib/engine/findings';
import { arbitraryAnalysisTable, loadCheckTable, referenceAnalysis } from '../../support/analysis-tables';

const byCode = (a: Analysis, code: Finding['code']) => a.findings.filter((f) => f.code === code);

describe('analysis against the check data', () => {
  // Source: MCNC/LGSynth'91 benchmark set (lion, lion9, train11); the counts of single-input changes
  // from reachable stable total states that reach an unspecified cell come from the check-data
  // README ("independent computation"): lion 1, lion9 2, train11 8.
  it('finds the single-input changes into unspecified cells of lion, lion9 and train11', () => {
    const lion = analyzeTable(loadCheckTable('lion'));
    const lionGaps = byCode(lion, 'unspecified-transition');
    expect(lionGaps).toHaveLength(1);
    // lion: st3 at 00, inputs become 10
    expect(lionGaps[0]).toMatchObject({ state: 'st3', inputs: '10', severity: 'error' });
    expect(lionGaps[0]!.path[0]).toMatchObject({ state: 'st3', inputs: '00', kind: 'start' });
    expect(lionGaps[0]!.path.at(-1)).toMatchObject({ state: 'st3', inputs: '10', kind: 'unspecified' });
    expect(lionGaps[0]!.message).toBe('From stable (st3, 00), changing in0 reaches the unspecified cell (st3, 10).');

    const lion9 = byCode(analyzeTable(loadCheckTable('lion9')), 'unspecified-transition');
    // lion9: st0 at 00 going to 01; st8 at 00 going to 10
    expect(lion9.map((f) => [f.path[0]!.state, f.path[0]!.inputs, f.inputs])).toEqual([
      ['st0', '00', '01'],
      ['st8', '00', '10'],
    ]);
    expect(byCode(analyzeTable(loadCheckTable('train11')), 'unspecified-transition')).toHaveLength(8);
  });

  it('counts the same single-input changes by plain enumeration', () => {
    // Same source as above; here counted per change by the reference enumeration.
    expect(referenceAnalysis(loadCheckTable('lion')).sicToUnspecified).toBe(1);
    expect(referenceAnalysis(loadCheckTable('lion9')).sicToUnspecified).toBe(2);
    expect(referenceAnalysis(loadCheckTable('train11')).sicToUnspecified).toBe(8);
  });

  // Source: check-data README: "lion9, train11 and the gated latch below have exactly one stable cell
  // per row. None of the three has an oscillation or an output that changes more than once during a
  // single-input change." (MCNC/LGSynth'91 benchmark set; gated latch from Mano and Ciletti, Digital
  // Design, encoded from memory.)
  it.each(['lion9', 'train11', 'gated-latch'])('%s has one stable cell per row, no oscillation and no output glitch', (name) => {
    const t = loadCheckTable(name);
    const a = analyzeTable(t);
    for (const s of t.states) expect(a.stable.filter((x) => x.state === s)).toHaveLength(1);
    expect(byCode(a, 'oscillation')).toEqual([]);
    expect(byCode(a, 'output-glitch')).toEqual([]);
    expect(byCode(a, 'no-stable-state')).toEqual([]);
  });

  // Source: check-data README, gated latch worked example (Mano and Ciletti, Digital Design, encoded
  // from memory): "12 single-input changes start from stable cells. In 8 of them Q is the same before
  // and after, so the transient cell must take that value."
  it('gated latch: 12 single-input changes from stable cells, 8 of them with an open transient output between equal values', () => {
    const t = loadCheckTable('gated-latch');
    const a = analyzeTable(t);
    expect(a.reachableStable.length * t.inputs.length).toBe(12);
    const hazards = byCode(a, 'output-hazard');
    expect(hazards).toHaveLength(8);
    expect(hazards.every((f) => f.fix?.action === 'fill-outputs')).toBe(true);
  });
});

// Invented example: a door interlock with a transient chain, a spare row and a loop.
const door = interchangeToTable({
  format: 'quiesce-flow-table',
  version: 1,
  name: 'door_interlock',
  inputs: ['door_closed', 'key'],
  outputs: ['unlock'],
  states: ['idle', 'armed', 'open', 'spare', 'fix'],
  reset: 'idle',
  rows: {
    idle: { '00': 'idle/0', '01': 'armed/-', '11': '-', '10': 'idle/0' },
    armed: { '00': 'idle/-', '01': 'armed/0', '11': 'open/1', '10': 'fix/-' },
    open: { '00': '-', '01': 'armed/0', '11': 'open/0', '10': 'armed/-' },
    spare: { '00': 'spare/0', '11': 'open/-' },
    fix: { '10': 'armed/-', '01': 'fix/1' },
  },
});

describe('analysis semantics on an invented table', () => {
  const a = analyzeTable(door);
  it('lists stable, reachable and power-up results', () => {
    expect(a.stable).toEqual([
      { state: 'idle', inputs: '00' },
      { state: 'idle', inputs: '10' },
      { state: 'armed', inputs: '01' },
      { state: 'open', inputs: '11' },
      { state: 'spare', inputs: '00' },
      { state: 'fix', inputs: '01' },
    ]);
    // fix is only visited as a transient state of the loop armed -> fix -> armed in column 10
    expect(a.reachable).toEqual(['idle', 'armed', 'open', 'fix']);
    expect(a.powerUp.map((p) => [p.inputs, p.result, p.state])).toEqual([
      ['00', 'stable', 'idle'],
      ['01', 'stable', 'armed'],
      ['11', 'unspecified', null],
      ['10', 'stable', 'idle'],
    ]);
  });

  it('reports each required code with its location keys', () => {
    const osc = byCode(a, 'oscillation');
    expect(osc).toHaveLength(1);
    expect(osc[0]).toMatchObject({ inputs: '10', cycle: ['armed', 'fix'], severity: 'error' });
    // from stable (open, 11), key falls: open -> armed -> fix -> armed
    expect(osc[0]!.path.map((p) => `${p.state}:${p.kind}`)).toEqual(['open:start', 'open:transient', 'armed:transient', 'fix:transient', 'armed:repeat']);
    expect(byCode(a, 'unspecified-power-up')).toMatchObject([{ inputs: '11', state: 'idle', severity: 'warning' }]);
    expect(byCode(a, 'unreachable-state')).toMatchObject([{ state: 'spare', fix: { action: 'remove-state', state: 'spare' } }]);
    expect(byCode(a, 'no-stable-state')).toEqual([]);
    // armed at 01 (unlock 0), door closes: armed/1 at 11 is transient, open is stable at 11 with 0: 0, 1, 0
    expect(byCode(a, 'output-glitch')).toMatchObject([{ state: 'armed', from: '01', inputs: '11', output: 'unlock' }]);
    expect(byCode(a, 'output-glitch')[0]!.message).toBe('From stable (armed, 01), changing door_closed makes unlock go 0, 1, 0 before it settles in (open, 11).');
    const gap = byCode(a, 'unspecified-transition');
    expect(gap).toMatchObject([{ state: 'idle', inputs: '11', fix: { action: 'add-cell', state: 'idle', inputs: '11', next: 'open' } }]);
    // our extra code: open transient outputs between equal values (fill sets them)
    expect(byCode(a, 'output-hazard').map((f) => f.message)).toEqual([
      "From stable (idle, 00), changing key passes (idle, 01), where unlock is a don't-care that could add a change; output fill would set it to 0.",
      "From stable (armed, 01), changing key passes (armed, 00), where unlock is a don't-care that could add a change; output fill would set it to 0.",
    ]);
    for (const f of a.findings) expect(findingSchema.safeParse(f).success).toBe(true);
  });

  it('sorts findings by severity, then code and place', () => {
    const order = a.findings.map((f) => f.severity);
    expect([...order].sort((p, q) => ['error', 'warning', 'info'].indexOf(p) - ['error', 'warning', 'info'].indexOf(q))).toEqual(order);
    expect(a.counts.error).toBe(a.findings.filter((f) => f.severity === 'error').length);
  });

  it('caps each code and says how many were left out', () => {
    const capped = analyzeTable(door, { limit: 0 });
    const notes = capped.findings.filter((f) => f.code === 'findings-truncated');
    expect(notes.length).toBeGreaterThan(0);
    expect(capped.findings.every((f) => f.code === 'findings-truncated')).toBe(true);
    expect(notes.reduce((sum, f) => sum + f.omitted!, 0)).toBe(a.findings.length);
    expect(capped.counts).toEqual(a.counts);
  });

  it('reports rows without a stable cell as info', () => {
    const t = cloneTable(door);
    t.next[4 * 4 + keyToColumn('01')] = 1; // fix at 01 now goes to armed
    const f = byCode(analyzeTable(t), 'no-stable-state');
    expect(f).toMatchObject([{ state: 'fix', severity: 'info', message: 'Row fix has no stable cell.' }]);
  });
});

describe('analysis against a plain enumeration of the contract', () => {
  it('agrees on random tables (stable, reachable, gaps, loops, glitches)', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable(), (t) => {
        const a = analyzeTable(t);
        const ref = referenceAnalysis(t);
        expect(new Set(a.stable.map((x) => `${x.state}@${x.inputs}`))).toEqual(ref.stable);
        expect(new Set(a.reachableStable.map((x) => `${x.state}@${x.inputs}`))).toEqual(ref.reachableStable);
        expect(new Set(a.reachable)).toEqual(ref.reachable);
        expect(new Set(byCode(a, 'unspecified-transition').map((f) => `${f.state}@${f.inputs}`))).toEqual(ref.unspecified);
        expect(new Set(byCode(a, 'oscillation').map((f) => `${f.inputs}:${f.cycle!.join(',')}`))).toEqual(ref.oscillations);
        expect(new Set(byCode(a, 'unspecified-power-up').map((f) => f.inputs))).toEqual(ref.powerUpUnspecified);
        expect(new Set(byCode(a, 'output-glitch').map((f) => `${f.state}@${f.from}>${f.inputs}:${f.output}`))).toEqual(ref.glitches);
        for (const f of byCode(a, 'output-hazard')) expect(f.message).toMatch(/ passes \(/);
        const unreachable = t.states.filter((s) => !ref.reachable.has(s));
        expect(byCode(a, 'unreachable-state').map((f) => f.state)).toEqual(unreachable);
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });

  it('raises order-dependent-double-change exactly where runtime.ts doubleChangeOutcomes disagree', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable({ inputs: 3 }), (t) => {
        const a = analyzeTable(t);
        const rt = createRuntime(t);
        const n = t.inputs.length;
        const expected = new Set<string>();
        for (const x of a.reachableStable) {
          const s = t.states.indexOf(x.state);
          const c = keyToColumn(x.inputs);
          for (let i = 0; i < n; i++)
            for (let j = i + 1; j < n; j++) {
              const o = doubleChangeOutcomes(rt, s, c, 1 << i, 1 << j);
              if (o.agreed < 0) expected.add(`${x.state}@${x.inputs}>${columnToKey(c ^ (1 << i) ^ (1 << j), n)}`);
            }
        }
        const got = byCode(a, 'order-dependent-double-change');
        expect(new Set(got.map((f) => `${f.state}@${f.from}>${f.inputs}`))).toEqual(expected);
        for (const f of got) {
          expect(f.outcomes).toHaveLength(3);
          const states = f.outcomes!.map((o) => o.state);
          expect(states.includes(null) || new Set(states).size > 1).toBe(true);
        }
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });

  it('is unchanged when states are renamed (modulo names)', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable(), (t) => {
        const renamed: FlowTable = cloneTable(t);
        renamed.states = t.states.map((_, i) => `renamed ${t.states.length - i}`);
        const back = new Map(renamed.states.map((s, i) => [s, t.states[i]!] as const));
        const unname = (s: string) => back.get(s) ?? s;
        const a = analyzeTable(t);
        const b = analyzeTable(renamed);
        const normalize = (f: Finding) =>
          findingToKey({
            ...f,
            ...(f.state !== undefined ? { state: unname(f.state) } : {}),
            ...(f.cycle ? { cycle: f.cycle.map(unname).sort() } : {}),
          });
        const plain = (f: Finding) => findingToKey(f.cycle ? { ...f, cycle: [...f.cycle].sort() } : f);
        expect(b.findings.map(normalize)).toEqual(a.findings.map(plain));
        expect(b.findings.map((f) => f.path.map((p) => `${unname(p.state)}@${p.inputs}:${p.kind}`))).toEqual(
          a.findings.map((f) => f.path.map((p) => `${p.state}@${p.inputs}:${p.kind}`)),
        );
        expect(b.reachable.map(unname)).toEqual(a.reachable);
        expect(b.stable.map((x) => ({ ...x, state: unname(x.state) }))).toEqual(a.stable);
        expect(b.counts).toEqual(a.counts);
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });
});
