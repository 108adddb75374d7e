import { describe, expect, it } from 'vitest';
import {
  columnToKey,
  FlowTableError,
  grayKeys,
  interchangeToTable,
  keyToColumn,
  tableToInterchange,
  tablesEqual,
} from '../../../src/lib/engine/model';
import { doorInterlockDocument } from '../../support/worked-examples';

const door = doorInterlockDocument();

function issuesOf(value: unknown): string[] {
  try {
    interchangeToTable(value);
  } catch (e) {
    expect(e).toBeInstanceOf(FlowTableError);
    return (e as FlowTableError).issues.map((i) => `${i.where}: ${i.message}`);
  }
  throw new Error('expected a FlowTableError');
}

describe('interchange model', () => {
  it('reads the DESIGN.md example and writes it back canonically', () => {
    const t = interchangeToTable(door);
    expect(t.states).toEqual(['idle', 'armed', 'open']);
    const back = tableToInterchange(t);
    expect(back.rows.armed).toEqual({ '00': 'idle/0', '01': 'armed/0', '11': 'open/-' });
    expect(tablesEqual(interchangeToTable(back), t)).toBe(true);
  });

  it('column keys put inputs[k] at character k and bit k', () => {
    expect(keyToColumn('01')).toBe(2);
    expect(columnToKey(2, 2)).toBe('01');
    for (let c = 0; c < 16; c++) expect(keyToColumn(columnToKey(c, 4))).toBe(c);
  });

  it('lays out columns in Gray order, neighbours differing in one bit (common practice, no source)', () => {
    expect(grayKeys(2)).toEqual(['00', '01', '11', '10']);
    const keys = grayKeys(4);
    expect(new Set(keys).size).toBe(16);
    for (let i = 0; i < keys.length; i++) {
      const a = keys[i]!;
      const b = keys[(i + 1) % keys.length]!;
      expect([...a].filter((ch, k) => ch !== b[k]).length).toBe(1);
    }
  });

  it('names the exact place of every problem', () => {
    expect(issuesOf({ ...door, rows: { ...door.rows, armed: { '11': 'opne/0' } } })).toEqual([
      'rows.armed["11"]: unknown state "opne"',
    ]);
    expect(issuesOf({ ...door, inputs: ['door_closed', 'key', 'key'] })[0]).toBe('inputs[2]: duplicate name "key"');
    expect(issuesOf({ ...door, reset: 'nowhere' })).toContain('reset: unknown state "nowhere"');
    expect(issuesOf({ ...door, rows: { idle: { '0x': 'idle/0' } } })[0]).toMatch(/^rows\.idle\["0x"\]: column key/);
    expect(issuesOf({ ...door, rows: { idle: { '00': 'idle/01' } } })[0]).toMatch(/^rows\.idle\["00"\]: output bits "01"/);
    expect(issuesOf({ ...door, states: 'idle' })[0]).toMatch(/^states: /);
    expect(issuesOf({ ...door, colour: 'red' })).toEqual(['(document): unknown field "colour"']);
    expect(issuesOf({ ...door, inputs: Array.from({ length: 13 }, (_, i) => `i${i}`) })[0]).toMatch(/^inputs: at most 12 inputs/);
    expect(issuesOf({ ...door, states: ['x'.repeat(65)] })[0]).toMatch(/^states\[0\]: names are 1 to 64/);
    expect(issuesOf(null)[0]).toMatch(/^\(document\)/);
  });

  it('refuses names with control, separator or text-direction characters, which could make code read other than it is', () => {
    // Direction overrides and isolates, the marks, C1 controls, line/paragraph separators and the BOM
    // (Unicode Standard Annex #9 lists the direction controls; the others are common practice, no source).
    // Also invisible fillers (a name with U+200B looks like one without) and a lone surrogate (no JSON for it).
    const hidden = ['\u202e', '\u202a', '\u2066', '\u2069', '\u200f', '\u061c', '\u0085', '\u009b', '\u2028', '\u2029', '\ufeff', '\u007f', '\u200b', '\u00ad', '\u2060', '\u{e0041}', '\ud800'];
    for (const ch of hidden) {
      const name = `armed${ch}x`;
      expect(issuesOf({ ...door, states: ['idle', name, 'open'] })[0], `U+${ch.codePointAt(0)!.toString(16)}`).toMatch(/^states\[1\]: names are .*no control, invisible or text-direction characters/);
    }
    // Letters of right-to-left scripts are names like any other; only the invisible controls are refused.
    expect(() => interchangeToTable({ ...door, inputs: ['door_closed', 'מפתח'], rows: {} })).not.toThrow();
    expect(() => interchangeToTable({ ...door, inputs: ['door_closed', 'key😀', 'می\u200cخواهم'], rows: {} })).not.toThrow(); // a surrogate pair and ZWNJ are fine
  });
});
