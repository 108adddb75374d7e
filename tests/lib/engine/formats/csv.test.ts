import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseCsv, readCsvRecords, tableToCsv } from '../../../../src/lib/engine/formats/csv';
import { IssueList } from '../../../../src/lib/engine/formats/source';
import { parseText } from '../../../../src/lib/engine/formats/text';
import { cellToText, countColumns, keyToColumn, tablesEqual, type FlowTable } from '../../../../src/lib/engine/model';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { expectLocatedOrOk, issuesOf } from '../../../support/format-helpers';

const door = () => parseText(readFileSync(new URL('../../../fixtures/formats/door-interlock.qfl', import.meta.url), 'utf8'));
const cell = (t: FlowTable, state: string, key: string) => cellToText(t, t.states.indexOf(state) * countColumns(t.inputs.length) + keyToColumn(key));

const DOOR_CSV = [
  '#flow,door_interlock',
  '#about,Cabinet door interlock for the Halvorsen HX-2 (invented)',
  '#inputs,door_closed,key',
  '#outputs,unlock',
  '#reset,idle',
  '#double-change,guarded',
  '#prefix,door',
  '#scenario,open the door,00,01,11',
  'state,00,01,11,10',
  'idle,idle/0,armed/0,-,idle/0',
  'armed,idle/0,armed/0,open/-,-',
  'open,-,armed/0,open/1,idle/0',
  '',
].join('\r\n');

describe('CSV reader (RFC 4180)', () => {
  const read = (text: string) => {
    const issues = new IssueList();
    const records = readCsvRecords(text, issues);
    return { fields: records.map((r) => r.fields.map((f) => f.text)), issues: issues.issues.map((i) => `${i.where}: ${i.message}`) };
  };

  it('reads quoted fields with commas, doubled quotes and line breaks', () => {
    expect(read('a,"b,c","d""e"\r\n"multi\r\nline",,x\r\n').fields).toEqual([
      ['a', 'b,c', 'd"e'],
      ['multi\r\nline', '', 'x'],
    ]);
    expect(read('a,b\nc,d').fields).toEqual([
      ['a', 'b'],
      ['c', 'd'],
    ]);
  });

  it('locates broken quoting', () => {
    expect(read('a,"open\n').issues).toEqual(['1:3: unterminated quoted field']);
    expect(read('"a"b,c\n').issues).toEqual(['1:4: unexpected "b" after a closing quote']);
    expect(read('a,b"c\n').issues).toEqual(['1:4: a quote inside an unquoted field']);
  });
});

describe('Quiesce CSV layout', () => {
  it('writes the documented layout with CRLF line ends', () => {
    expect(tableToCsv(door())).toBe(DOOR_CSV);
  });

  it('reads it back exactly', () => {
    expect(tablesEqual(parseCsv(DOOR_CSV), door())).toBe(true);
  });

  it('survives a spreadsheet: lost leading zeros, trailing empty fields, empty cells, LF line ends', () => {
    const sheet = [
      '#flow,door_interlock,,,',
      '#about,Cabinet door interlock for the Halvorsen HX-2 (invented),,,',
      '#inputs,door_closed,key,,',
      '#outputs,unlock,,,',
      '#reset,idle,,,',
      '#double-change,guarded,,,',
      '#prefix,door,,,',
      '#scenario,open the door,0,1,11',
      'state,0,1,11,10',
      'idle,idle/0,armed/0,,idle/0',
      'armed,idle/0,armed/0,open/-,',
      'open,,armed/0,open/1,idle/0',
      ',,,,',
    ].join('\n');
    expect(tablesEqual(parseCsv(sheet), door())).toBe(true);
  });

  it('defaults: #flow from the options, no outputs, the first row is the reset state', () => {
    const t = parseCsv('#inputs,a\nstate,0,1\ns,s,t\nt,s,t\n', { name: 'from_file' });
    expect(t.name).toBe('from_file');
    expect(t.outputs).toEqual([]);
    expect(t.states[t.reset]).toBe('s');
    expect(cell(t, 's', '1')).toBe('t');
  });

  it('keeps names with commas, quotes and "#" (a state row may start with #)', () => {
    const t = parseCsv('#flow,"a, b"\n#inputs,"say ""x"""\nstate,0,1\n#hash,#hash,"c,d"\n"c,d",-,#hash\n');
    expect(t.name).toBe('a, b');
    expect(t.inputs).toEqual(['say "x"']);
    expect(t.states).toEqual(['#hash', 'c,d']);
    expect(tablesEqual(parseCsv(tableToCsv(t)), t)).toBe(true);
  });

  it('names the line, column and spreadsheet cell of each problem', () => {
    const bad = DOOR_CSV.replace('open/1', 'opne/1').replace('#reset,idle', '#reset,idel').replace('#prefix,door', '#prefx,door');
    expect(issuesOf(() => parseCsv(bad))).toEqual([
      '5:8: unknown state "idel" (cell B5)',
      '7:1: unknown metadata row "#prefx" (cell A7)',
      '12:16: unknown state "opne" (cell D12)',
    ]);
    expect(issuesOf(() => parseCsv('#inputs,a,a\nstate,0,1\ns,s\n'))).toEqual(['1:1: missing #flow row', '1:11: duplicate input "a" (cell C1)']);
    expect(issuesOf(() => parseCsv('#flow,x\n#inputs,a\nstate,0,1\ns,s\ns,s,s\n'))).toEqual(['4:1: row has 1 cell, the header has 2 columns (cell A4)', '5:1: duplicate row for state "s" (cell A5)']);
    expect(issuesOf(() => parseCsv('#flow,x\n#inputs,a\nstate,0,0\n'))).toEqual(['3:1: the table has no state rows', '3:9: duplicate column key "0" (cell C3)']);
    expect(issuesOf(() => parseCsv('#flow,x\n#inputs,a\nidle,0,1\n'))).toEqual(['3:1: expected the header row "state,KEY,KEY,...", found "idle" (cell A3)']);
    expect(issuesOf(() => parseCsv('#flow,x\n#inputs,a\noutputs,y\n'))[0]).toMatch(/^3:1: expected the header row/);
  });

  it('round-trips random tables, hostile names included (fast-check)', () => {
    fc.assert(
      fc.property(arbitraryTable(), (t) => {
        expect(tablesEqual(parseCsv(tableToCsv(t)), t)).toBe(true);
      }),
      { numRuns: 300 },
    );
  });

  it('mangled CSV gives a located FlowTableError or a table (fast-check)', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxInputs: 3, maxStates: 4 }), fc.nat(), fc.nat(3), fc.constantFrom('"', ',', '\n', '#', 'x', '0', ''), (t, pos, del, ins) => {
        const src = tableToCsv(t);
        const at = pos % (src.length + 1);
        expectLocatedOrOk(() => parseCsv(src.slice(0, at) + ins + src.slice(at + del)));
      }),
      { numRuns: 300 },
    );
  });
});
