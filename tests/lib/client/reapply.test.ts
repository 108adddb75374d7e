import { describe, expect, it } from 'vitest';
import { reapplyEdits } from '../../../src/lib/client/reapply';
import { applyEdit, type TableEdit } from '../../../src/lib/client/table-edits';
import { cellToText, countColumns, keyToColumn, LIMITS, type FlowTable } from '../../../src/lib/engine/model';
import { doorInterlockTable } from '../../support/worked-examples';

const base = doorInterlockTable();
const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));
const edit = (t: FlowTable, ...edits: TableEdit[]) => edits.reduce((acc, e) => applyEdit(acc, e), t);
const setCell = (t: FlowTable, state: string, key: string, next: string, bits: string | null): TableEdit => ({
  kind: 'set-cell',
  state: t.states.indexOf(state),
  column: keyToColumn(key),
  next: t.states.indexOf(next),
  bits,
});

describe('reapplyEdits', () => {
  it('carries cells over, keeps the head’s own, and lists cells both sides changed differently (mine wins)', () => {
    const mine = edit(base, setCell(base, 'idle', '11', 'open', '-'), setCell(base, 'armed', '10', 'idle', '0'), setCell(base, 'open', '00', 'idle', '0'));
    const theirs = edit(base, setCell(base, 'armed', '10', 'armed', '0'), setCell(base, 'open', '00', 'idle', '0'), setCell(base, 'open', '10', 'open', '1'));
    const r = reapplyEdits(base, mine, theirs);
    expect(r.blocked).toBeNull();
    const t = r.table!;
    expect(cell(t, 'idle', '11')).toBe('open/-'); // mine only
    expect(cell(t, 'open', '10')).toBe('open/1'); // theirs only
    expect(cell(t, 'open', '00')).toBe('idle/0'); // both, alike: no conflict
    expect(cell(t, 'armed', '10')).toBe('idle/0'); // both, differently: mine wins, listed
    expect(r.conflicts).toEqual([{ state: 'armed', inputs: '10', base: '-', mine: 'idle/0', theirs: 'armed/0' }]);
    expect(r.notes).toEqual([]);
  });

  it('carries a state rename over to the head, with the head’s edits of that row and of cells that lead to it', () => {
    const mine = edit(base, { kind: 'rename-state', index: 1, name: 'ready' });
    const theirs = edit(base, setCell(base, 'armed', '10', 'idle', '0'), setCell(base, 'idle', '11', 'armed', '0'));
    const r = reapplyEdits(base, mine, theirs);
    const t = r.table!;
    expect(t.states).toEqual(['idle', 'ready', 'open']);
    expect(cell(t, 'ready', '10')).toBe('idle/0');
    expect(cell(t, 'idle', '11')).toBe('ready/0');
    expect(cell(t, 'open', '01')).toBe('ready/0');
    expect(r.conflicts).toEqual([]);
    expect(r.applied).toBe(1);
  });

  it('carries input and output renames over, so the cells still match one by one', () => {
    const mine = edit(base, { kind: 'rename-input', index: 1, name: 'badge' }, { kind: 'rename-output', index: 0, name: 'release' }, setCell(base, 'idle', '11', 'open', '1'));
    const theirs = edit(base, setCell(base, 'armed', '10', 'armed', '0'));
    const r = reapplyEdits(base, mine, theirs);
    expect(r.blocked).toBeNull();
    const t = r.table!;
    expect(t.inputs).toEqual(['door_closed', 'badge']);
    expect(t.outputs).toEqual(['release']);
    expect(cell(t, 'idle', '11')).toBe('open/1');
    expect(cell(t, 'armed', '10')).toBe('armed/0');
  });

  it('deletes a state the user deleted when the head left its row alone, and keeps it (with a note) when the head changed it', () => {
    const mine = edit(base, { kind: 'delete-state', index: 2 });
    expect(cell(mine, 'armed', '11')).toBe('-'); // deleting clears the cells that led there

    const untouched = reapplyEdits(base, mine, edit(base, setCell(base, 'idle', '10', 'armed', '0')));
    expect(untouched.table!.states).toEqual(['idle', 'armed']);
    expect(cell(untouched.table!, 'armed', '11')).toBe('-');
    expect(cell(untouched.table!, 'idle', '10')).toBe('armed/0');
    expect(untouched.notes).toEqual([]);

    const changed = reapplyEdits(base, mine, edit(base, setCell(base, 'open', '00', 'idle', '0')));
    expect(changed.table!.states).toEqual(['idle', 'armed', 'open']);
    expect(cell(changed.table!, 'open', '00')).toBe('idle/0');
    expect(changed.notes).toEqual(['Your deletion of state open was not carried over: the newer revision changed its row.']);
  });

  it('adds the user’s new states and carries a changed reset state', () => {
    const withHeld = edit(base, { kind: 'add-state', name: 'held' });
    const mine = edit(withHeld, setCell(withHeld, 'held', '11', 'held', '1'), setCell(withHeld, 'open', '01', 'held', '1'), { kind: 'set-reset', index: 1 });
    const r = reapplyEdits(base, mine, edit(base, setCell(base, 'idle', '10', 'armed', '0')));
    const t = r.table!;
    expect(t.states).toEqual(['idle', 'armed', 'open', 'held']);
    expect(t.states[t.reset]).toBe('armed');
    expect(cell(t, 'held', '11')).toBe('held/1');
    expect(cell(t, 'open', '01')).toBe('held/1');
    expect(cell(t, 'idle', '10')).toBe('armed/0');
  });

  it('notes a rename it cannot carry because the head renamed or removed that state itself', () => {
    const mine = edit(base, { kind: 'rename-state', index: 1, name: 'ready' });
    const theirs = edit(base, { kind: 'rename-state', index: 1, name: 'primed' });
    const r = reapplyEdits(base, mine, theirs);
    expect(r.table!.states).toEqual(['idle', 'primed', 'open']);
    expect(r.notes[0]).toBe('Your rename of state armed to ready was not carried over: the newer revision no longer has armed.');
  });

  it('merges an input the user added with the head’s cell edits: the new half keeps the user’s cells', () => {
    const withStop = edit(base, { kind: 'add-input', name: 'estop' });
    // Key order door_closed key estop: with estop at 1, open falls back to idle with unlock off.
    const mine = edit(withStop, setCell(withStop, 'open', '111', 'idle', '0'), setCell(withStop, 'idle', '110', 'open', '-'));
    const theirs = edit(base, setCell(base, 'armed', '10', 'idle', '0'));
    const r = reapplyEdits(base, mine, theirs);
    expect(r.blocked).toBeNull();
    const t = r.table!;
    expect(t.inputs).toEqual(['door_closed', 'key', 'estop']);
    expect(cell(t, 'open', '111')).toBe('idle/0');
    expect(cell(t, 'idle', '110')).toBe('open/-');
    expect(cell(t, 'armed', '100')).toBe('idle/0'); // the head's edit, where estop is 0
    expect(cell(t, 'armed', '101')).toBe('-');
    expect(r.notes).toEqual([]);
  });

  it('merges an output the head added and an input the user deleted, in the head’s order', () => {
    const theirs = edit(base, { kind: 'add-output', name: 'lamp' }, { kind: 'move-output', from: 1, to: 0 });
    const mine = edit(base, setCell(base, 'idle', '11', 'open', '1'));
    const r = reapplyEdits(base, mine, theirs);
    expect(r.table!.outputs).toEqual(['lamp', 'unlock']);
    expect(cell(r.table!, 'idle', '11')).toBe('open/-1');

    const withoutKey = edit(base, { kind: 'delete-input', index: 1 });
    const r2 = reapplyEdits(base, withoutKey, edit(base, setCell(base, 'armed', '10', 'armed', '0')));
    expect(r2.table!.inputs).toEqual(['door_closed']);
    expect(cell(r2.table!, 'armed', '1')).toBe('armed/0'); // the head's cell where key was 0 stays
  });

  it('says when the head deleted an input under cells the user changed', () => {
    const mine = edit(base, setCell(base, 'idle', '11', 'open', '1'), setCell(base, 'armed', '10', 'idle', '0'));
    const theirs = edit(base, { kind: 'delete-input', index: 1 });
    const r = reapplyEdits(base, mine, theirs);
    expect(r.table!.inputs).toEqual(['door_closed']);
    expect(cell(r.table!, 'armed', '1')).toBe('idle/0'); // key was 0 there: carried
    expect(r.notes).toEqual(['Your cells where input key is 1 were not carried over: the newer revision deleted input key.']);
  });

  it('refuses a merge whose inputs together exceed the limit, and says why', () => {
    const names = Array.from({ length: LIMITS.inputs - base.inputs.length }, (_, i) => `in${i}`);
    const mine = edit(base, ...names.map((name): TableEdit => ({ kind: 'add-input', name })));
    const r = reapplyEdits(base, mine, edit(base, { kind: 'add-input', name: 'extra' }));
    expect(r.table).toBeNull();
    expect(r.blocked).toMatch(/^the inputs and outputs of both sides do not fit together: a table has at most 12 inputs/);
  });
  it('never drops the user’s row edits silently when the head removed, re-aimed or took the name of that state', () => {
    // The head deleted `open`, whose row the user edited.
    const editedOpen = edit(base, setCell(base, 'open', '00', 'idle', '0'));
    const gone = reapplyEdits(base, editedOpen, edit(base, { kind: 'delete-state', index: 2 }));
    expect(gone.notes).toEqual(['Your edits of state open were not carried over: the newer revision no longer has that state.']);
    // The user deleted `open`, but the head added a transition into it: deleting would clear it.
    const deleted = edit(base, { kind: 'delete-state', index: 2 });
    const intoOpen = reapplyEdits(base, deleted, edit(base, setCell(base, 'idle', '11', 'open', '0')));
    expect(intoOpen.table!.states).toContain('open');
    expect(cell(intoOpen.table!, 'idle', '11')).toBe('open/0');
    expect(intoOpen.notes).toEqual(['Your deletion of state open was not carried over: the newer revision added transitions into it.']);
    // The user renamed armed to ready and edited it; the head already has its own `ready`.
    const renamed = edit(base, { kind: 'rename-state', index: 1, name: 'ready' });
    const mine = edit(renamed, setCell(renamed, 'ready', '10', 'idle', '0'));
    const withReady = edit(base, { kind: 'add-state', name: 'ready' });
    const clash = reapplyEdits(base, mine, withReady);
    expect(cell(clash.table!, 'ready', '10')).toBe('-'); // the head's unrelated `ready` is left alone
    expect(clash.notes[0]).toBe('Your rename of state armed to ready was not carried over: the newer revision already has a state ready.');
  });

  it('names the cells of a state the user added that an input the head deleted takes away', () => {
    const withHeld = edit(base, { kind: 'add-state', name: 'held' });
    const mine = edit(withHeld, setCell(withHeld, 'held', '01', 'held', '0'));
    const r = reapplyEdits(base, mine, edit(base, { kind: 'delete-input', index: 1 }));
    expect(r.table!.states).toContain('held');
    expect(r.notes).toEqual(['Your cells where input key is 1 were not carried over: the newer revision deleted input key.']);
  });

  it('names the output values and the reset state it cannot carry because the head deleted their output or state', () => {
    const mine = edit(base, setCell(base, 'idle', '11', 'open', '1'));
    const noUnlock = edit(base, { kind: 'add-output', name: 'lamp' }, { kind: 'delete-output', index: 0 });
    expect(reapplyEdits(base, mine, noUnlock).notes).toEqual(['Your values of output unlock were not carried over: the newer revision deleted output unlock.']);
    // Only a changed value counts: the same output untouched by the user gives no note.
    expect(reapplyEdits(base, base, noUnlock).notes).toEqual([]);
    const resetOpen = edit(base, { kind: 'set-reset', index: 2 });
    const r = reapplyEdits(base, resetOpen, edit(base, { kind: 'delete-state', index: 2 }));
    expect(r.notes).toEqual(['Your reset state open was not carried over: the newer revision has no state open.']);
  });
});
