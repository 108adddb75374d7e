import { describe, expect, it } from 'vitest';
import { initWorkbench, workbenchReducer } from '../../../src/lib/client/workbench-store';
import { replayScenario, runToVectors, startRun, stepRun } from '../../../src/lib/client/sim-session';
import { parseText } from '../../../src/lib/engine/formats/text';
import { cellToText, countColumns, keyToColumn, type FlowTable } from '../../../src/lib/engine/model';
import { simulateTable } from '../../../src/lib/engine/simulate';

// Invented example: a variant of the door interlock in tests/support/worked-examples.ts whose armed/11 cell sets unlock at once.
const DOOR = `flow door_interlock
inputs door_closed key
outputs unlock
reset idle

grid     00       01       11       10
  idle   idle/0   armed/0  -        idle/0
  armed  idle/0   armed/0  open/1   -
  open   -        armed/0  open/1   idle/0
`;
const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));

describe('workbench store', () => {
  const start = initWorkbench(parseText(DOOR));

  it('a grid edit reprints the source; undo and redo restore both', () => {
    const edited = workbenchReducer(start, { type: 'edit', edit: { kind: 'set-next', state: 0, column: keyToColumn('11'), next: 2 } });
    expect(edited.source).toMatch(/idle\s+idle\/0\s+armed\/0\s+open\/-/);
    expect(edited.dirty).toBe(true);
    const undone = workbenchReducer(edited, { type: 'undo' });
    expect(undone.source).toBe(start.source);
    expect(workbenchReducer(undone, { type: 'redo' }).source).toBe(edited.source);
  });

  it('a source edit that parses replaces the table, the grid sees it', () => {
    const text = start.source.replace(/(open\s+)-/, '$1idle/0');
    const s = workbenchReducer(start, { type: 'source', text });
    expect(s.sourceIssues).toEqual([]);
    expect(cell(s.table, 'open', '00')).toBe('idle/0');
    expect(s.past.length).toBe(1);
  });

  it('a source edit that does not parse keeps the last good table and reports line:column', () => {
    const text = start.source.replace('armed/0  open/1', 'armd/0   open/1');
    const s = workbenchReducer(start, { type: 'source', text });
    expect(s.table).toBe(start.table);
    expect(s.source).toBe(text);
    expect(s.sourceIssues[0]).toMatchObject({ line: 9, message: 'unknown state "armd"' });
  });

  it('a refused edit leaves the table and explains why', () => {
    const s = workbenchReducer(start, { type: 'edit', edit: { kind: 'add-state', name: 'idle' } });
    expect(s.table).toBe(start.table);
    expect(s.editError).toMatch(/already a state named "idle"/);
  });
});

describe('simulator session', () => {
  const t = parseText(DOOR);
  it('follows the run-time contract like the engine simulation: power-up, then single changes', () => {
    let run = startRun(t, keyToColumn('00'));
    run = stepRun(run, keyToColumn('01'));
    run = stepRun(run, keyToColumn('11'));
    run = stepRun(run, keyToColumn('10'));
    expect(run.events.map((e) => [t.states[e.after.state], e.after.outputs, e.fault])).toEqual([
      ['idle', 0, 'none'],
      ['armed', 0, 'none'],
      ['open', 1, 'none'],
      ['idle', 0, 'none'],
    ]);
    expect(run.events[2]!.path.map((s) => t.states[s])).toEqual(['armed', 'open']);
    // The engine's own simulation is the reference for every step.
    const engine = simulateTable(t, runToVectors(run));
    expect(engine.steps.map((s) => [s.state, s.outputs, s.fault])).toEqual(run.events.map((e) => [t.states[e.after.state], String(e.after.outputs), e.fault]));
    expect(replayScenario(t, runToVectors(run)).events.map((e) => e.after)).toEqual(run.events.map((e) => e.after));
  });
  it('a double change under the fault policy holds state and outputs', () => {
    let run = startRun(t, keyToColumn('00'), 'fault');
    run = stepRun(run, keyToColumn('11'));
    expect(run.events[1]).toMatchObject({ fault: 'double-change', changed: 2 });
    expect(run.events[1]!.after).toEqual(run.events[0]!.after);
    expect(simulateTable(t, ['00', '11'], { policy: 'fault' }).steps[1]).toMatchObject({ fault: 'double-change', state: 'idle' });
  });
});
