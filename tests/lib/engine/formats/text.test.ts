import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseKiss2 } from '../../../../src/lib/engine/formats/kiss2';
import { MAX_ISSUES } from '../../../../src/lib/engine/formats/source';
import { parseText, tableToText } from '../../../../src/lib/engine/formats/text';
import { cellToText, countColumns, FlowTableError, keyToColumn, NONE, tablesEqual, type FlowTable } from '../../../../src/lib/engine/model';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { changedLines, expectLocatedOrOk, issuesOf } from '../../../support/format-helpers';
import { KISS2_DIR } from '../../../support/check-data';

const fixture = (name: string) => readFileSync(new URL(`../../../fixtures/formats/${name}`, import.meta.url), 'utf8');
const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));

const DOOR_CANONICAL = `flow door_interlock
about "Cabinet door interlock for the Halvorsen HX-2 (invented)"
inputs door_closed key
outputs unlock
reset idle
double-change guarded
prefix door
scenario "open the door" 00 01 11

grid     00       01       11       10
  idle   idle/0   armed/0  -        idle/0
  armed  idle/0   armed/0  open/-   -
  open   -        armed/0  open/1   idle/0
`;

describe('.qfl grid form', () => {
  it('reads the door interlock example with comments, description, settings and a scenario', () => {
    const t = parseText(fixture('door-interlock.qfl'));
    expect(t.name).toBe('door_interlock');
    expect(t.description).toBe('Cabinet door interlock for the Halvorsen HX-2 (invented)');
    expect(t.inputs).toEqual(['door_closed', 'key']);
    expect(t.outputs).toEqual(['unlock']);
    expect(t.states).toEqual(['idle', 'armed', 'open']);
    expect(t.states[t.reset]).toBe('idle');
    expect(t.settings).toEqual({ doubleChange: 'guarded', prefix: 'door' });
    expect(t.scenarios).toEqual([{ name: 'open the door', inputs: ['00', '01', '11'] }]);
    expect(cell(t, 'armed', '11')).toBe('open/-');
    expect(cell(t, 'idle', '11')).toBe('-');
    expect(cell(t, 'open', '11')).toBe('open/1');
    // character k of a key is inputs[k]: "01" is door_closed=0, key=1
    expect(t.next[0 * 4 + 0b10]).toBe(1);
  });

  it('prints canonically: fixed section order, Gray columns, aligned by names only', () => {
    const t = parseText(fixture('door-interlock.qfl'));
    expect(tableToText(t)).toBe(DOOR_CANONICAL);
    expect(tableToText(parseText(DOOR_CANONICAL))).toBe(DOOR_CANONICAL);
  });

  it('accepts the header columns in any order', () => {
    const shuffled = DOOR_CANONICAL.replace(/grid[\s\S]*$/, 'grid 10 11 00 01\n idle idle/0 - idle/0 armed/0\n armed - open/- idle/0 armed/0\n open idle/0 open/1 - armed/0\n');
    expect(tablesEqual(parseText(shuffled), parseText(DOOR_CANONICAL))).toBe(true);
  });

  it('defaults: no outputs line means no outputs, policy guarded, no prefix', () => {
    const t = parseText('flow x\ninputs a\nreset s\ngrid 0 1\n s s t\n t s t\n');
    expect(t.outputs).toEqual([]);
    expect(t.settings).toEqual({ doubleChange: 'guarded' });
    expect(cell(t, 's', '1')).toBe('t');
    expect(tableToText(t)).toBe('flow x\ninputs a\noutputs\nreset s\ndouble-change guarded\n\ngrid  0  1\n  s   s  t\n  t   s  t\n');
  });

  it('a NEXT cell without bits leaves every output a don\'t-care', () => {
    const t = parseText('flow x\ninputs a\noutputs p q\nreset s\ngrid 0 1\n s s s/1-\n');
    expect(cell(t, 's', '0')).toBe('s/--');
    expect(cell(t, 's', '1')).toBe('s/1-');
  });

  it('a `states` line fixes the order and allows rows to be left out', () => {
    const t = parseText('flow x\ninputs a\nstates p q r\nreset q\ngrid 0 1\n r r p\n p p -\n');
    expect(t.states).toEqual(['p', 'q', 'r']);
    expect(t.states[t.reset]).toBe('q');
    expect(cell(t, 'q', '0')).toBe('-');
    expect(cell(t, 'r', '1')).toBe('p');
  });

  it('quotes names that are not bare words, keywords, or "-", and reads them back', () => {
    const t = parseText('flow "door #2"\ninputs "-" "a b" grid\noutputs "out put?"\nreset "cells"\ngrid 000 100 110 010 011 111 101 001\n "cells" "cells"/1 - - - - - - "say \\"hi\\""/0\n "say \\"hi\\"" - - - - - - - -\n');
    expect(t.name).toBe('door #2');
    expect(t.inputs).toEqual(['-', 'a b', 'grid']);
    expect(t.states).toEqual(['cells', 'say "hi"']);
    const printed = tableToText(t);
    expect(printed).toContain('inputs "-" "a b" "grid"');
    expect(printed).toContain('reset "cells"');
    expect(tablesEqual(parseText(printed), t)).toBe(true);
  });

  it('writes a table with no inputs with the empty key ""', () => {
    const t = parseText('flow x\ninputs\nreset s\ngrid ""\n s s\n');
    expect(t.inputs).toEqual([]);
    expect(t.next[0]).toBe(0);
    expect(tablesEqual(parseText(tableToText(t)), t)).toBe(true);
  });

  it('reads CRLF line ends and a byte-order mark', () => {
    const crlf = `\ufeff${DOOR_CANONICAL.replace(/\n/g, '\r\n')}`;
    expect(tablesEqual(parseText(crlf), parseText(DOOR_CANONICAL))).toBe(true);
  });

  it('changing one cell changes one line of the printed grid', () => {
    const t = parseText(DOOR_CANONICAL);
    const u = parseText(DOOR_CANONICAL.replace('open/-   -\n', 'open/-   armed/1\n'));
    expect(changedLines(tableToText(t), tableToText(u))).toBe(1);
  });
});

describe('.qfl compact form', () => {
  const compact = `flow jog
inputs a b c d e
outputs led
states idle armed open
reset idle

cells
  idle   0----  idle/0
  idle   1--0-  armed/0
  idle   1--01  armed/0   # overlaps the line above? no: differs in e
  armed  -----  armed/-
  open   1----  open/1
  open   11---  open/1    # overlapping cubes that agree are fine
`;

  it('expands cubes, leaves uncovered cells unspecified, accepts agreeing overlaps', () => {
    const t = parseText(compact);
    expect(t.inputs.length).toBe(5);
    expect(cell(t, 'idle', '00000')).toBe('idle/0');
    expect(cell(t, 'idle', '01111')).toBe('idle/0');
    expect(cell(t, 'idle', '10000')).toBe('armed/0');
    expect(cell(t, 'idle', '10001')).toBe('armed/0');
    expect(cell(t, 'idle', '10011')).toBe('-');
    expect(cell(t, 'armed', '10101')).toBe('armed/-');
    expect(cell(t, 'open', '01000')).toBe('-');
    let specified = 0;
    for (const x of t.next) if (x !== NONE) specified++;
    // idle: 16 + 4 + 4, armed: 32, open: 16
    expect(specified).toBe(72);
  });

  it('prints more than four inputs in the compact form, exact and stable', () => {
    const t = parseText(compact);
    const printed = tableToText(t);
    expect(printed).toContain('states idle armed open\n');
    expect(printed).toContain('\ncells\n');
    expect(printed).toContain('  armed  -----  armed/-\n');
    expect(tablesEqual(parseText(printed), t)).toBe(true);
    expect(tableToText(parseText(printed))).toBe(printed);
  });

  it('reports overlapping cubes that disagree, at the second line', () => {
    const src = 'flow x\ninputs a b\noutputs y\nstates s t\nreset s\ncells\n  s 0- t/0\n  s -0 s/0\n';
    expect(issuesOf(() => parseText(src))).toEqual(['8:8: cell (s, 00) is already "t/0" from line 7']);
  });

  it('reports a cube of the wrong width and a missing states line', () => {
    expect(issuesOf(() => parseText('flow x\ninputs a b\nstates s\nreset s\ncells\n  s 0 s\n'))).toEqual(['6:5: cube "0" is not 2 characters of 0, 1 and -']);
    expect(issuesOf(() => parseText('flow x\ninputs a b\nreset s\ncells\n  s 0- s\n'))).toEqual(['4:1: the compact `cells` form needs a `states` line']);
  });
});

describe('.qfl errors: located, with hints, all of them', () => {
  const withHint = (src: string) => {
    try {
      parseText(src);
    } catch (e) {
      expect(e).toBeInstanceOf(FlowTableError);
      return (e as FlowTableError).message.split('\n');
    }
    throw new Error('expected an error');
  };

  it('unknown state with a did-you-mean hint', () => {
    const src = DOOR_CANONICAL.replace('open/1', 'opne/1');
    expect(withHint(src)).toEqual(['13:28: unknown state "opne" (hint: did you mean "open"?)']);
  });

  it('duplicate names, wrong row length, unknown statement, all in one report', () => {
    const src = 'flow x\ninputs a key key\noutputs y\nreset s\nfrob 3\ngrid 000 001\n  s s/0\n';
    expect(issuesOf(() => parseText(src))).toEqual([
      '2:14: duplicate input "key"',
      '5:1: unknown statement "frob"',
      '6:1: the grid header lacks 6 column keys: 011 010 110 111 101 100',
    ]);
    const rows = 'flow x\ninputs a\noutputs y\nreset s\ngrid 0 1\n  s s/0 s/1 s/0\n  t s/0\n';
    expect(issuesOf(() => parseText(rows))).toEqual(['6:3: grid row has 3 cells, the header has 2 columns', '7:3: grid row has 1 cell, the header has 2 columns']);
  });

  it('missing flow, missing inputs, missing reset', () => {
    expect(issuesOf(() => parseText('inputs a\ngrid 0 1\n s s s\n'))).toEqual([
      '1:1: the first statement must be `flow NAME`',
      '1:1: missing `flow NAME`',
      '1:1: missing `reset STATE`',
    ]);
    expect(issuesOf(() => parseText('flow x\nreset s\n'))).toEqual(['1:1: missing `inputs` statement', '1:1: the table has no states']);
    expect(issuesOf(() => parseText(''))).toEqual(['1:1: the source is empty']);
  });

  it('too many inputs, bad bits, bad policy, bad prefix, bad names', () => {
    const many = `flow x\ninputs ${Array.from({ length: 13 }, (_, i) => `i${i}`).join(' ')}\nreset s\n`;
    expect(issuesOf(() => parseText(many))).toEqual(['1:1: the table has no states', '2:46: too many inputs: 13 (at most 12)']);
    expect(issuesOf(() => parseText('flow x\ninputs a\noutputs y z\nreset s\ngrid 0 1\n s s/10 s/1x\n'))).toEqual(['6:11: output bits "1x" are not 2 characters of 0, 1 and -']);
    expect(issuesOf(() => parseText('flow x\ninputs a\nreset s\ndouble-change gaurded\nprefix Door\ngrid 0 1\n s s s\n'))).toEqual([
      '4:15: unknown double-change policy "gaurded"',
      '5:8: invalid prefix "Door"',
    ]);
    expect(issuesOf(() => parseText('flow x\ninputs a+b\nreset "-"\ngrid 0 1\n "-" - -\n'))).toEqual([
      '2:8: "a+b" cannot be written bare as input',
      '5:2: a state cannot be named "-"',
    ]);
  });

  it('lexical errors: unterminated string, bad escape, control character', () => {
    expect(issuesOf(() => parseText('flow "x\ninputs a\n'))).toEqual(['1:1: the table has no states', '1:1: missing `reset STATE`', '1:6: unterminated string']);
    expect(issuesOf(() => parseText('flow "x\\q"\ninputs a\nreset s\ngrid 0 1\n s s s\n'))).toEqual(['1:8: bad escape "\\q" in a string']);
    expect(issuesOf(() => parseText('flow x\u0007y\ninputs a\nreset s\ngrid 0 1\n s s s\n'))).toEqual(['1:7: control character U+0007']);
  });

  it('duplicate rows and duplicate statements', () => {
    expect(issuesOf(() => parseText('flow x\ninputs a\nreset s\nreset s\ngrid 0 1\n s s s\n s s s\n'))).toEqual([
      '4:1: duplicate `reset` statement',
      '7:2: duplicate row for state "s"',
    ]);
  });

  it(`stops after ${MAX_ISSUES} problems`, () => {
    const src = `flow x\ninputs a\nreset s\ngrid 0 1\n s s s\n${Array.from({ length: 80 }, () => ' s zz zz\n').join('')}`;
    const issues = issuesOf(() => parseText(src));
    expect(issues.length).toBe(MAX_ISSUES);
  });
});

describe('.qfl matches the KISS2 copy of the gated-latch worked example', () => {
  // Source: check-data/README.md worked example (Mano and Ciletti, Digital Design; encoded from memory),
  // also given as check-data/kiss2/gated-latch.kiss2
  it('has the same states, reset and cells', () => {
    const q = parseText(fixture('gated-latch.qfl'));
    const k = parseKiss2(readFileSync(KISS2_DIR + 'gated-latch.kiss2', 'utf8'), { name: 'gated_latch' });
    expect(q.states).toEqual(['a', 'b', 'c', 'd', 'e', 'f']);
    expect(k.states).toEqual(q.states);
    expect(q.reset).toBe(k.reset);
    expect(Array.from(q.next)).toEqual(Array.from(k.next));
    expect(Array.from(q.outCare)).toEqual(Array.from(k.outCare));
    expect(Array.from(q.outValue)).toEqual(Array.from(k.outValue));
    // one stable cell per row (check-data README)
    for (let s = 0; s < 6; s++) expect(Array.from(q.next.slice(s * 4, s * 4 + 4)).filter((x) => x === s).length).toBe(1);
  });
});

describe('.qfl properties (fast-check)', () => {
  it('parse(print(t)) equals t and print is a fixed point, hostile names included', () => {
    fc.assert(
      fc.property(arbitraryTable(), (t) => {
        const printed = tableToText(t);
        const back = parseText(printed);
        expect(tablesEqual(back, t)).toBe(true);
        expect(tableToText(back)).toBe(printed);
      }),
      { numRuns: 300 },
    );
  });

  it('round-trips tables with 5 to 8 inputs through the compact form', () => {
    fc.assert(
      fc.property(arbitraryTable({ minInputs: 5, maxInputs: 8, maxStates: 4 }), (t) => {
        const printed = tableToText(t);
        expect(printed).toContain('\ncells\n');
        expect(tablesEqual(parseText(printed), t)).toBe(true);
      }),
      { numRuns: 60 },
    );
  });

  it('mangled sources give a located FlowTableError or a table, never another exception', () => {
    fc.assert(
      fc.property(
        arbitraryTable({ maxInputs: 3, maxStates: 4 }),
        fc.array(fc.tuple(fc.nat(), fc.nat(3), fc.string({ maxLength: 3 })), { minLength: 1, maxLength: 4 }),
        (t, edits) => {
          let src = tableToText(t);
          for (const [pos, del, ins] of edits) {
            const at = pos % (src.length + 1);
            src = src.slice(0, at) + ins + src.slice(at + del);
          }
          expectLocatedOrOk(() => {
            const back = parseText(src);
            // whatever parses must print and parse again
            expect(tablesEqual(parseText(tableToText(back)), back)).toBe(true);
          });
        },
      ),
      { numRuns: 300 },
    );
  });
});
