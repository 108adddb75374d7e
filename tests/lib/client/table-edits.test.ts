import { describe, expect, it } from 'vitest';
import { applyEdit, checkName, EditError, proposeName } from '../../../src/lib/client/table-edits';
import { parseText, tableToText } from '../../../src/lib/engine/formats/text';
import { cellToText, countColumns, keyToColumn, NONE, type FlowTable } from '../../../src/lib/engine/model';
import { analyzeTable } from '../../../src/lib/engine/analyze';
import { doorInterlockTable } from '../../support/worked-examples';

const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));

describe('applyEdit', () => {
  const t = doorInterlockTable();

  it('sets a cell with next state and output bits, leaving the argument unchanged', () => {
    const u = applyEdit(t, { kind: 'set-cell', state: 0, column: keyToColumn('11'), next: 2, bits: '1' });
    expect(cell(u, 'idle', '11')).toBe('open/1');
    expect(cell(t, 'idle', '11')).toBe('-');
  });

  it('clears a cell and refuses bits of the wrong width', () => {
    expect(cell(applyEdit(t, { kind: 'clear-cell', state: 0, column: 0 }), 'idle', '00')).toBe('-');
    expect(() => applyEdit(t, { kind: 'set-bits', state: 0, column: 0, bits: '10' })).toThrow(EditError);
  });

  it('inserts a state and keeps every next state pointing at the same names', () => {
    const u = applyEdit(t, { kind: 'add-state', name: 'waiting', at: 1 });
    expect(u.states).toEqual(['idle', 'waiting', 'armed', 'open']);
    for (const s of t.states) for (const k of ['00', '01', '11', '10']) expect(cell(u, s, k)).toBe(cell(t, s, k));
    expect(cell(u, 'waiting', '00')).toBe('-');
  });

  it('moves a state without changing behaviour (the analysis is the same)', () => {
    const u = applyEdit(t, { kind: 'move-state', from: 0, to: 2 });
    expect(u.states).toEqual(['armed', 'open', 'idle']);
    expect(u.states[u.reset]).toBe('idle');
    expect(analyzeTable(u).findings.map((f) => f.message).sort()).toEqual(analyzeTable(t).findings.map((f) => f.message).sort());
  });

  it('deletes a state: cells going there become unspecified', () => {
    const u = applyEdit(t, { kind: 'delete-state', index: 2 });
    expect(u.states).toEqual(['idle', 'armed']);
    expect(cell(u, 'armed', '11')).toBe('-');
    expect(() => applyEdit(parseText('flow x\ninputs a\noutputs\nreset s\n\ngrid 0 1\n  s s s\n'), { kind: 'delete-state', index: 0 })).toThrow(/at least one state/);
  });

  it('moves an input by permuting columns (the same cells under swapped keys)', () => {
    const u = applyEdit(t, { kind: 'move-input', from: 0, to: 1 });
    expect(u.inputs).toEqual(['key', 'door_closed']);
    expect(cell(u, 'armed', '11')).toBe('open/-');
    expect(cell(u, 'idle', '10')).toBe('armed/0'); // was idle @ 01
    expect(cell(u, 'idle', '01')).toBe('idle/0'); // was idle @ 10
    expect(tableToText(applyEdit(u, { kind: 'move-input', from: 1, to: 0 }))).toBe(tableToText(t));
  });

  it('adds an input (new half unspecified) and deletes it again', () => {
    const u = applyEdit(t, { kind: 'add-input', name: 'light' });
    expect(u.inputs.length).toBe(3);
    expect(cell(u, 'idle', '010')).toBe('armed/0');
    expect(cell(u, 'idle', '011')).toBe('-');
    expect(tableToText(applyEdit(u, { kind: 'delete-input', index: 2 }))).toBe(tableToText(t));
  });

  it('keeps saved scenarios in step with added, moved and deleted inputs, so the table still reads back', () => {
    const withRun = applyEdit(t, { kind: 'add-scenario', scenario: { name: 'unlock', inputs: ['00', '01', '11'] } });
    const added = applyEdit(withRun, { kind: 'add-input', name: 'light' });
    expect(added.scenarios[0]!.inputs).toEqual(['000', '010', '110']); // the new input is 0, as its old half of the table
    const moved = applyEdit(added, { kind: 'move-input', from: 2, to: 0 });
    expect(moved.scenarios[0]!.inputs).toEqual(['000', '001', '011']);
    const deleted = applyEdit(moved, { kind: 'delete-input', index: 1 });
    expect(deleted.scenarios[0]!.inputs).toEqual(['00', '01', '01']);
    for (const u of [added, moved, deleted]) expect(parseText(tableToText(u)).scenarios).toEqual(u.scenarios);
  });

  it('adds, moves and deletes outputs bit by bit', () => {
    const u = applyEdit(applyEdit(t, { kind: 'add-output', name: 'lamp' }), { kind: 'set-bits', state: 2, column: keyToColumn('11'), bits: '10' });
    expect(cell(u, 'open', '11')).toBe('open/10');
    expect(cell(u, 'idle', '00')).toBe('idle/0-');
    const moved = applyEdit(u, { kind: 'move-output', from: 0, to: 1 });
    expect(moved.outputs).toEqual(['lamp', 'unlock']);
    expect(cell(moved, 'open', '11')).toBe('open/01');
    expect(cell(applyEdit(moved, { kind: 'delete-output', index: 0 }), 'open', '11')).toBe('open/1');
  });

  it('refuses duplicate and malformed names with a readable message', () => {
    expect(() => applyEdit(t, { kind: 'rename-state', index: 0, name: 'armed' })).toThrow(/already a state named "armed"/);
    expect(() => applyEdit(t, { kind: 'rename-input', index: 2, name: 'light' })).toThrow(EditError); // only 2 inputs
    expect(() => applyEdit(t, { kind: 'rename-output', index: -1, name: 'lamp' })).toThrow(/no such output/);
    expect(checkName('a/b', [], 'state')).toMatch(/no "\/"/);
    expect(checkName('-', [], 'state')).toMatch(/unspecified/);
    expect(proposeName('s', ['s1', 's2', 's4'])).toBe('s5');
  });

  it('keeps scenarios and settings through edits', () => {
    const u = applyEdit(applyEdit(t, { kind: 'add-scenario', scenario: { name: 'arm', inputs: ['00', '01'] } }), { kind: 'set-settings', settings: { doubleChange: 'fault', prefix: 'door' } });
    const v = applyEdit(u, { kind: 'add-state', name: 'x' });
    expect(v.scenarios).toEqual([{ name: 'arm', inputs: ['00', '01'] }]);
    expect(v.settings).toEqual({ doubleChange: 'fault', prefix: 'door' });
    expect(parseText(tableToText(v)).scenarios).toEqual(v.scenarios);
    expect(v.next[0]).not.toBe(NONE);
  });
});
