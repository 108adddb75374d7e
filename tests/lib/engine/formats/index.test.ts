import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  exportTable,
  formatFromFilename,
  FORMATS,
  MAX_SOURCE_BYTES,
  nameFromFilename,
  parseSource,
  type SourceFormat,
} from '../../../../src/lib/engine/formats/index';
import { FlowTableError, tablesEqual, type FlowTable } from '../../../../src/lib/engine/model';
import * as engine from '../../../../src/lib/engine/index';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { KISS2_DIR } from '../../../support/check-data';

const door = readFileSync(new URL('../../../fixtures/formats/door-interlock.qfl', import.meta.url), 'utf8');

/** Parses and expects exactly one located issue (line:column or a JSON path). */
function oneLocatedIssue(text: string, format: SourceFormat): string {
  let err: unknown;
  try {
    parseSource(text, format, { name: 'bad' });
  } catch (e) {
    err = e;
  }
  expect(err).toBeInstanceOf(FlowTableError);
  const issues = (err as FlowTableError).issues;
  expect(issues.length).toBe(1);
  const i = issues[0]!;
  expect(i.where).toMatch(/^\d+:\d+$|^[a-z(]/);
  expect((err as FlowTableError).message).toMatch(/^(\d+:\d+|[a-z(][^:]*): /);
  return `${i.where}: ${i.message}`;
}

describe('format registry', () => {
  it('lists four formats and picks them by extension', () => {
    expect(FORMATS).toEqual(['text', 'json', 'kiss2', 'csv']);
    expect(formatFromFilename('door.qfl')).toBe('text');
    expect(formatFromFilename('dir/Door.JSON')).toBe('json');
    expect(formatFromFilename('lion.kiss2')).toBe('kiss2');
    expect(formatFromFilename('lion.kiss')).toBe('kiss2');
    expect(formatFromFilename('grid.csv')).toBe('csv');
    expect(formatFromFilename('notes.txt')).toBeUndefined();
  });

  it('derives a valid table name from a file name', () => {
    expect(nameFromFilename('/x/y/lion9.kiss2')).toBe('lion9');
    expect(nameFromFilename('C:\\tables\\door interlock.csv')).toBe('door interlock');
    expect(nameFromFilename('.csv')).toBe('table');
    expect(nameFromFilename(`${'x'.repeat(100)}.csv`)).toBe('x'.repeat(64));
  });

  it('is re-exported by the engine index', () => {
    expect(engine.parseSource).toBe(parseSource);
    expect(engine.tableToText).toBeTypeOf('function');
  });
});

describe('round trips between formats lose nothing the target can hold', () => {
  it('text -> JSON -> CSV -> text is exact for the door interlock', () => {
    const t = parseSource(door, 'text');
    const viaJson = parseSource(exportTable(t, 'json'), 'json');
    const viaCsv = parseSource(exportTable(viaJson, 'csv'), 'csv');
    expect(tablesEqual(viaCsv, t)).toBe(true);
    expect(exportTable(viaCsv, 'text')).toBe(exportTable(t, 'text'));
  });

  it('every KISS2 benchmark survives KISS2 -> text -> JSON -> CSV -> KISS2 (MCNC/LGSynth\'91 benchmark set, check-data/kiss2)', () => {
    const dir = KISS2_DIR;
    for (const f of readdirSync(dir).filter((x) => x.endsWith('.kiss2'))) {
      const src = readFileSync(dir + f, 'utf8');
      const t = parseSource(src, 'kiss2', { name: nameFromFilename(f) });
      let u: FlowTable = t;
      for (const fmt of ['text', 'json', 'csv', 'kiss2'] as const) u = parseSource(exportTable(u, fmt), fmt, { name: t.name });
      expect(tablesEqual(u, t), f).toBe(true);
    }
  });

  it('random tables survive text -> JSON -> CSV and back to text (fast-check)', () => {
    fc.assert(
      fc.property(arbitraryTable(), (t) => {
        let u = t;
        for (const fmt of ['text', 'json', 'csv'] as const) u = parseSource(exportTable(u, fmt), fmt);
        expect(tablesEqual(u, t)).toBe(true);
      }),
      { numRuns: 100 },
    );
  });
});

describe('bad input: one clear located error, never anything else', () => {
  it('binary garbage (NUL bytes) in every format', () => {
    const garbage = String.fromCharCode(...Array.from({ length: 300 }, (_, i) => (i * 37) % 256));
    for (const f of FORMATS) expect(oneLocatedIssue(garbage, f)).toMatch(/^1:1: the source contains a NUL byte/);
  });

  it('text that is not UTF-8 (replacement characters from the decoder)', () => {
    const decoded = new TextDecoder('utf-8').decode(new Uint8Array([0x66, 0x6c, 0x6f, 0x77, 0x20, 0xff, 0xfe, 0x0a]));
    for (const f of FORMATS) expect(oneLocatedIssue(decoded, f)).toBe('1:6: the source is not valid UTF-8 text (found a replacement character)');
  });

  it('a 3 MiB source is refused before parsing', () => {
    const big = `flow x\n${'# padding padding padding padding padding padding padding\n'.repeat((3 * 1024 * 1024) / 58)}`;
    expect(big.length).toBeGreaterThan(MAX_SOURCE_BYTES);
    for (const f of FORMATS) expect(oneLocatedIssue(big, f)).toMatch(/^1:1: the source is 3\.0 MiB; the limit is 2 MiB$/);
  });

  it('wrong types in JSON', () => {
    expect(oneLocatedIssue('{"format":"quiesce-flow-table","version":1,"name":"x","inputs":[1],"outputs":[],"states":["s"],"reset":"s","rows":{}}', 'json')).toBe('inputs[0]: Expected string, received number');
  });

  it('unknown states', () => {
    expect(oneLocatedIssue(door.replace('armed/0  open/-', 'armed/0  opne/-'), 'text')).toBe('14:33: unknown state "opne"');
    expect(oneLocatedIssue('#flow,x\n#inputs,a\nstate,0,1\ns,s,q\n', 'csv')).toBe('4:5: unknown state "q" (cell C4)');
    expect(oneLocatedIssue('{"format":"quiesce-flow-table","version":1,"name":"x","inputs":[],"outputs":[],"states":["s"],"reset":"q","rows":{}}', 'json')).toBe('reset: unknown state "q"');
    expect(oneLocatedIssue('.i 1\n.o 1\n.r q\n0 s s 1\n', 'kiss2')).toBe('3:4: reset state "q" appears in no transition line');
  });

  it('duplicate names', () => {
    expect(oneLocatedIssue(door.replace('inputs door_closed key', 'inputs door_closed door_closed'), 'text')).toBe('5:20: duplicate input "door_closed"');
    expect(oneLocatedIssue('#flow,x\n#inputs,a\n#outputs,y,y\nstate,0,1\ns,s,s\n', 'csv')).toBe('3:12: duplicate output "y" (cell C3)');
    expect(oneLocatedIssue('{"format":"quiesce-flow-table","version":1,"name":"x","inputs":[],"outputs":[],"states":["s","s"],"reset":"s","rows":{}}', 'json')).toBe('states[1]: duplicate name "s"');
    expect(oneLocatedIssue('.i 1\n.o 2\n.ob y y\n0 s s 11\n', 'kiss2')).toBe('3:7: duplicate output name "y"');
  });

  it('too many inputs', () => {
    const names = Array.from({ length: 13 }, (_, i) => `i${i}`);
    expect(oneLocatedIssue(`flow x\ninputs ${names.join(' ')}\nstates s\nreset s\n`, 'text')).toBe('2:46: too many inputs: 13 (at most 12)');
    expect(oneLocatedIssue(`#flow,x\n#inputs,${names.join(',')}\nstate,0\ns,s\n`, 'csv')).toBe('2:47: too many inputs: 13 (at most 12) (cell N2)');
    expect(oneLocatedIssue(JSON.stringify({ format: 'quiesce-flow-table', version: 1, name: 'x', inputs: names, outputs: [], states: ['s'], reset: 's', rows: {} }), 'json')).toBe('inputs: at most 12 inputs');
    expect(oneLocatedIssue('.i 13\n.o 1\n', 'kiss2')).toBe('1:4: too many inputs: 13 (at most 12)');
  });

  it('truncated files', () => {
    const json = exportTable(parseSource(door, 'text'), 'json');
    expect(oneLocatedIssue(json.slice(0, json.indexOf('"armed": {') + 20), 'json')).toBe('12:22: unterminated string');
    expect(oneLocatedIssue(door.slice(0, door.lastIndexOf('\n  open') + 21), 'text')).toBe('15:3: grid row has 1 cell, the header has 4 columns');
    const csv = exportTable(parseSource(door, 'text'), 'csv');
    expect(oneLocatedIssue(csv.slice(0, csv.indexOf('armed,') + 10), 'csv')).toBe('11:1: row has 1 cell, the header has 4 columns (cell A11)');
    expect(oneLocatedIssue('.i 2\n.o 1\n00 a a 1\n01 a', 'kiss2')).toBe('4:1: a transition line has 2 fields, expected 4');
  });
});
