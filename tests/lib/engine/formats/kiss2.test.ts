import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseKiss2, tableToKiss2 } from '../../../../src/lib/engine/formats/kiss2';
import { cellToText, countColumns, FlowTableError, keyToColumn, NONE, tablesEqual, type FlowTable } from '../../../../src/lib/engine/model';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { issuesOf } from '../../../support/format-helpers';
import { KISS2_DIR } from '../../../support/check-data';

const DIR = KISS2_DIR;
const read = (f: string) => readFileSync(`${DIR}${f}.kiss2`, 'utf8');
const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));

// Inputs, outputs and states per file: the table in check-data/README.md
// (MCNC/LGSynth'91 benchmark set; mark1 and seq735 from a second public copy of the set).
const README_COUNTS: Record<string, [number, number, number]> = {
  lion: [2, 1, 4],
  lion9: [2, 1, 9],
  train11: [2, 1, 11],
  bbara: [4, 2, 10],
  bbtas: [2, 2, 6],
  beecount: [3, 4, 7],
  bbsse: [7, 7, 16],
  cse: [7, 7, 16],
  dk14: [3, 5, 7],
  dk15: [3, 5, 4],
  dk16: [2, 3, 27],
  ex1: [9, 19, 20],
  ex3: [2, 2, 10],
  keyb: [7, 2, 19],
  mark1: [5, 16, 15],
  mc: [3, 5, 4],
  modulo12: [1, 1, 12],
  donfile: [2, 1, 24],
  s1: [8, 6, 20],
  shiftreg: [1, 1, 8],
  tav: [4, 4, 4],
  seq735: [1, 1, 5],
};

const FILES = readdirSync(DIR)
  .filter((f) => f.endsWith('.kiss2'))
  .map((f) => f.slice(0, -'.kiss2'.length))
  .sort();

function headerCount(src: string, directive: string): number | undefined {
  const m = new RegExp(`^\\${directive}[ \\t]+(\\d+)`, 'm').exec(src);
  return m ? Number(m[1]) : undefined;
}

describe('KISS2 benchmark files (MCNC/LGSynth\'91 benchmark set, check-data/kiss2)', () => {
  it('covers every benchmark listed in the check-data README, plus the gated latch', () => {
    expect(FILES).toEqual([...Object.keys(README_COUNTS), 'gated-latch'].sort());
  });

  for (const f of FILES) {
    it(`${f} imports with the .i/.o/.s counts of its header and the README`, () => {
      const src = read(f);
      const t = parseKiss2(src, { name: f });
      expect(t.inputs.length).toBe(headerCount(src, '.i'));
      expect(t.outputs.length).toBe(headerCount(src, '.o'));
      expect(t.states.length).toBe(headerCount(src, '.s'));
      if (README_COUNTS[f]) expect([t.inputs.length, t.outputs.length, t.states.length]).toEqual(README_COUNTS[f]);
      expect(t.inputs).toEqual(t.inputs.map((_, k) => `in${k}`));
      // export and import again: nothing is lost, state order included
      expect(tablesEqual(parseKiss2(tableToKiss2(t), { name: f }), t)).toBe(true);
    });
  }

  it('the files use the quirks the README lists: leading blank line, trailing spaces', () => {
    expect(read('lion').startsWith('\n') || read('lion').startsWith('\r\n')).toBe(true);
    expect(read('lion')).toMatch(/^\.i 2 $/m);
  });

  it('mark1: `*` as the current state means every state', () => {
    // mark1 line 1: `0---- * state1 -11---1-00------`
    const t = parseKiss2(read('mark1'), { name: 'mark1' });
    expect(t.states.length).toBe(15);
    for (const s of t.states) for (let c = 0; c < 32; c += 2) expect(cell(t, s, c.toString(2).padStart(5, '0').split('').reverse().join(''))).toBe('state1/-11---1-00------');
    // in0 = 1 for state11 depends on in1 (`10--- state11 state13`, `11--- state11 state12`)
    expect(cell(t, 'state11', '10000')).toBe('state13/-11---1-00------');
    expect(cell(t, 'state11', '11000')).toBe('state12/-11---1-00------');
    // without .r the first state named is the reset state
    expect(t.states[t.reset]).toBe('state1');
  });

  it('.r names the reset state (seq735); without it the first state named is used (lion)', () => {
    const seq = parseKiss2(read('seq735'));
    expect(seq.states[seq.reset]).toBe('S1');
    expect(seq.states[0]).toBe('S0');
    const lion = parseKiss2(read('lion'));
    expect(lion.states[lion.reset]).toBe('st0');
  });

  it('lion: rows are the file order, unlisted pairs are unspecified, `-` outputs are don\'t-cares', () => {
    const t = parseKiss2(read('lion'));
    expect(t.states).toEqual(['st0', 'st1', 'st2', 'st3']);
    // `-0 st0 st0 0` covers 00 and 10 (leftmost character is the first input)
    expect(cell(t, 'st0', '00')).toBe('st0/0');
    expect(cell(t, 'st0', '10')).toBe('st0/0');
    expect(cell(t, 'st0', '01')).toBe('st1/-');
    // lion: the single-input change from st3 at 00 to 10 reaches an unspecified cell (check-data README)
    expect(cell(t, 'st3', '10')).toBe('-');
  });
});

describe('KISS2 reader details', () => {
  const lion = read('lion');

  it('reads CRLF, tabs, comments and the .start_kiss/.end_kiss wrapper the same way', () => {
    const base = parseKiss2(lion);
    const crlf = lion.replace(/\n/g, '\r\n');
    expect(tablesEqual(parseKiss2(crlf), base)).toBe(true);
    const wrapped = `# lion, wrapped\n.start_kiss\n${lion.replace(/ /g, '\t')}.end_kiss\n.code st0 00\n`;
    expect(tablesEqual(parseKiss2(wrapped), base)).toBe(true);
  });

  it('`*` as the next state leaves the cells unspecified', () => {
    const t = parseKiss2('.i 1\n.o 1\n0 a a 1\n1 a * 1\n1 b a 0\n');
    expect(cell(t, 'a', '1')).toBe('-');
    expect(cell(t, 'b', '1')).toBe('a/0');
    expect(cell(t, 'b', '0')).toBe('-');
  });

  it('overlapping lines that agree are fine; conflicting ones are located', () => {
    expect(cell(parseKiss2('.i 2\n.o 1\n-0 a a 1\n0- a a 1\n'), 'a', '00')).toBe('a/1');
    expect(issuesOf(() => parseKiss2('.i 2\n.o 1\n-0 a a 1\n0- a b 1\n1- b b 0\n'))).toEqual([
      '4:6: conflicting transitions for state "a" at inputs 00: line 3 gives a 1, this line gives b 1',
    ]);
    expect(issuesOf(() => parseKiss2('.i 1\n.o 1\n- * a 1\n0 b a 0\n'))).toEqual(['4:5: conflicting transitions for state "b" at inputs 0: line 3 gives a 1, this line gives a 0']);
  });

  it('checks widths against .i and .o, and field counts', () => {
    expect(issuesOf(() => parseKiss2('.i 2\n.o 1\n0 a a 1\n00 a a 11\n00 a\n'))).toEqual([
      '3:1: input cube "0" is not 2 characters of 0, 1 and -',
      '4:8: outputs "11" are not 1 character of 0, 1 and -',
      '5:1: a transition line has 2 fields, expected 4',
    ]);
    expect(issuesOf(() => parseKiss2('00 a a 1\n'))).toEqual([
      '1:1: a transition line before `.i` and `.o`',
      '1:1: missing `.i` (number of inputs)',
      '1:1: missing `.o` (number of outputs)',
    ]);
  });

  it('limits: more than 12 inputs or 32 outputs is a clear error', () => {
    expect(issuesOf(() => parseKiss2('.i 13\n.o 1\n'))).toEqual(['1:4: too many inputs: 13 (at most 12)']);
    expect(issuesOf(() => parseKiss2('.i 1\n.o 33\n'))).toEqual(['2:4: too many outputs: 33 (at most 32)']);
  });

  it('.p may be wrong; .s may be larger than the states used but not smaller', () => {
    expect(parseKiss2('.i 1\n.o 1\n.p 7\n.s 9\n0 a b 1\n1 b a 0\n').states).toEqual(['a', 'b']);
    expect(issuesOf(() => parseKiss2('.i 1\n.o 1\n.s 1\n0 a b 1\n1 b a 0\n'))).toEqual(['4:5: state "b" is state number 2, but `.s` declares 1 state']);
  });

  it('unknown directives, unknown reset state, bad state names', () => {
    expect(issuesOf(() => parseKiss2('.i 1\n.o 1\n.q 3\n.r zz\n0 a/x a 1\n'))).toEqual([
      '3:1: unknown KISS2 directive ".q"',
      '4:4: reset state "zz" appears in no transition line',
      '5:3: invalid state name "a/x"',
    ]);
  });

  it('.ilb and .ob give input and output names', () => {
    const t = parseKiss2('.i 2\n.o 1\n.ilb door key\n.ob unlock\n00 a a 0\n');
    expect(t.inputs).toEqual(['door', 'key']);
    expect(t.outputs).toEqual(['unlock']);
    expect(tableToKiss2(t)).toContain('.ilb door key\n.ob unlock\n');
  });
});

describe('KISS2 writer', () => {
  it('writes .i .o .p .s .r and merges identical cells into cubes', () => {
    const t = parseKiss2('.i 2\n.o 1\n00 a a 0\n01 a a 0\n10 a b 1\n11 b b -\n');
    expect(tableToKiss2(t)).toBe('.i 2\n.o 1\n.p 3\n.s 2\n.r a\n0- a a 0\n10 a b 1\n11 b b -\n');
  });

  it('keeps a state without cells with a `*` line', () => {
    const t = parseKiss2('.i 1\n.o 0\n- a a\n- c * \n- b a\n');
    expect(t.states).toEqual(['a', 'c', 'b']);
    const k = tableToKiss2(t);
    expect(k).toBe('.i 1\n.o 0\n.p 3\n.s 3\n.r a\n- a a\n- c *\n- b a\n');
    expect(tablesEqual(parseKiss2(k), t)).toBe(true);
  });

  it('refuses state names KISS2 cannot hold', () => {
    const t = parseKiss2('.i 1\n.o 1\n0 a a 1\n');
    t.states[0] = 'a b';
    expect(() => tableToKiss2(t)).toThrow(FlowTableError);
    expect(issuesOf(() => tableToKiss2(t))).toEqual(['states[0]: state name "a b" cannot be written in KISS2']);
  });

  it('round-trips random tables: states, order, reset, cells and one-word names (fast-check)', () => {
    const kissWord = (s: string) => /^[^\s#]+$/.test(s) && s !== '*';
    fc.assert(
      fc.property(
        arbitraryTable().filter((t) => t.states.every(kissWord)),
        (t) => {
          const back = parseKiss2(tableToKiss2(t), { name: t.name });
          expect(back.states).toEqual(t.states);
          expect(back.reset).toBe(t.reset);
          expect(Array.from(back.next)).toEqual(Array.from(t.next));
          expect(Array.from(back.outCare)).toEqual(Array.from(t.outCare));
          expect(Array.from(back.outValue)).toEqual(Array.from(t.outValue));
          if (t.inputs.every(kissWord)) expect(back.inputs).toEqual(t.inputs);
          if (t.outputs.every(kissWord)) expect(back.outputs).toEqual(t.outputs);
          let specified = 0;
          for (const x of t.next) if (x !== NONE) specified++;
          // merged cubes never need more lines than specified cells (plus one per empty row)
          expect(Number(/^\.p (\d+)$/m.exec(tableToKiss2(t))![1])).toBeLessThanOrEqual(specified + t.states.length);
        },
      ),
      { numRuns: 200 },
    );
  });
});
