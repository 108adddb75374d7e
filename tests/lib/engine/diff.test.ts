import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { cloneTable, interchangeToTable, NONE, tableToInterchange, type Interchange } from '../../../src/lib/engine/model';
import { analyzeTable } from '../../../src/lib/engine/analyze';
import { diffFindings, diffTables } from '../../../src/lib/engine/diff';
import { arbitraryAnalysisTable } from '../../support/analysis-tables';
import { doorInterlockDocument } from '../../support/worked-examples';

// Invented example: a door interlock, edited in small steps.
const base: Interchange = doorInterlockDocument();
const edit = (f: (d: Interchange) => void) => {
  const d = structuredClone(base);
  f(d);
  return interchangeToTable(d);
};
const a = interchangeToTable(base);

describe('diffTables', () => {
  it('finds nothing between a table and itself', () => {
    const d = diffTables(a, cloneTable(a));
    expect(d.same).toBe(true);
    expect(d.cells).toEqual([]);
    expect(d.findings!.added).toEqual([]);
    expect(d.findings!.resolved).toEqual([]);
  });

  it('reports a changed cell by name and the findings it resolves', () => {
    const b = edit((d) => (d.rows.idle!['11'] = 'open/-'));
    const d = diffTables(a, b);
    expect(d.same).toBe(false);
    expect(d.cells).toEqual([{ state: 'idle', inputs: '11', before: '-', after: 'open/-' }]);
    expect(d.findings!.resolved.map((f) => [f.code, f.state, f.inputs])).toContainEqual(['unspecified-transition', 'idle', '11']);
    expect(d.findings!.resolved.map((f) => f.code)).toContain('unspecified-power-up');
  });

  it('reports a rename when the row keeps its place and contents, otherwise a removal and an addition', () => {
    const renamed = edit((d) => {
      d.states[2] = 'unlocked';
      d.rows = JSON.parse(JSON.stringify(d.rows).replace(/open/g, 'unlocked'));
    });
    const d = diffTables(a, renamed);
    expect(d.states).toEqual({ added: [], removed: [], renamed: [{ before: 'open', after: 'unlocked' }] });
    expect(d.cells).toEqual([]);
    // findings follow the rename, so nothing reads as resolved or added
    expect(d.findings!.added).toEqual([]);
    expect(d.findings!.resolved).toEqual([]);

    const replaced = edit((d) => {
      d.states[2] = 'unlocked';
      d.rows = JSON.parse(JSON.stringify(d.rows).replace(/open/g, 'unlocked'));
      d.rows.unlocked!['00'] = 'idle/0';
    });
    const r = diffTables(a, replaced);
    expect(r.states).toEqual({ added: ['unlocked'], removed: ['open'], renamed: [] });
    // the other rows now point at a state with another name
    expect(r.cells).toEqual([{ state: 'armed', inputs: '11', before: 'open/-', after: 'unlocked/-' }]);
  });

  it('matches columns by input name, and reports added inputs and outputs', () => {
    const swapped = edit((d) => {
      d.inputs = ['key', 'door_closed'];
      const swap = (k: string) => k[1]! + k[0]!;
      d.rows = Object.fromEntries(Object.entries(d.rows).map(([s, row]) => [s, Object.fromEntries(Object.entries(row).map(([k, v]) => [swap(k), v]))]));
    });
    const d = diffTables(a, swapped);
    expect(d.cells).toEqual([]);
    expect(d.inputs).toEqual({ added: [], removed: [], renamed: [] });
    expect(d.same).toBe(false); // the input order changed

    const more = edit((d) => {
      d.inputs.push('override');
      d.outputs.push('buzzer');
      d.rows = { idle: { '000': 'idle/00' } };
    });
    const m = diffTables(a, more, { findings: false });
    expect(m.inputs.added).toEqual(['override']);
    expect(m.outputs.added).toEqual(['buzzer']);
    expect(m.cellsCompared).toBe(false);
    expect(m.findings).toBeUndefined();
  });

  it('reports name, reset and settings changes', () => {
    const b = edit((d) => {
      d.name = 'door_interlock_v2';
      d.reset = 'armed';
      d.settings = { doubleChange: 'stepwise' };
    });
    const d = diffTables(a, b, { findings: false });
    expect(d.name).toEqual({ before: 'door_interlock', after: 'door_interlock_v2' });
    expect(d.reset).toEqual({ before: 'idle', after: 'armed' });
    expect(d.settings).toEqual([{ key: 'doubleChange', before: 'guarded', after: 'stepwise' }]);
  });

  it('finds exactly one changed cell after a random one-cell edit', () => {
    fc.assert(
      fc.property(arbitraryAnalysisTable(), fc.nat(), fc.nat(), (t, at, to) => {
        const b = cloneTable(t);
        const cell = at % t.next.length;
        const options = [NONE, ...t.states.map((_, i) => i)].filter((s) => s !== t.next[cell]);
        b.next[cell] = options[to % options.length]!;
        if (b.next[cell] === NONE) {
          b.outCare[cell] = 0;
          b.outValue[cell] = 0;
        }
        const d = diffTables(t, b, { findings: false });
        expect(d.cells).toHaveLength(1);
        expect(d.same).toBe(false);
        expect(diffTables(t, cloneTable(t), { findings: false }).same).toBe(true);
        // the interchange documents agree on the changed place
        const ia = tableToInterchange(t);
        const ib = tableToInterchange(b);
        const c = d.cells[0]!;
        expect(ia.rows[c.state]![c.inputs] ?? '-').toBe(c.before);
        expect(ib.rows[c.state]![c.inputs] ?? '-').toBe(c.after);
      }),
      { numRuns: 300, seed: 0x5eed },
    );
  });
});

describe('diffFindings', () => {
  it('splits findings into added, resolved and unchanged by code and place', () => {
    const before = analyzeTable(a).findings;
    const after = analyzeTable(edit((d) => (d.rows.armed!['10'] = 'idle/0'))).findings;
    const d = diffFindings(before, after);
    expect(d.added.length + d.unchanged.length).toBe(after.length);
    expect(d.resolved.length + d.unchanged.length).toBe(before.length);
    expect(diffFindings(before, before)).toEqual({ added: [], resolved: [], unchanged: before });
  });
});
