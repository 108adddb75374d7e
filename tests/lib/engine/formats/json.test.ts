import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseJson, readJson, tableToJson } from '../../../../src/lib/engine/formats/json';
import { FlowTableError, interchangeToTable, tableToInterchange, tablesEqual } from '../../../../src/lib/engine/model';
import { arbitraryTable } from '../../../support/arbitrary-table';
import { changedLines, expectLocatedOrOk, issuesOf } from '../../../support/format-helpers';

// The interchange example of DESIGN.md §4.
const DESIGN_EXAMPLE = `{
  "format": "quiesce-flow-table",
  "version": 1,
  "name": "door_interlock",
  "inputs": ["door_closed", "key"],
  "outputs": ["unlock"],
  "states": ["idle", "armed", "open"],
  "reset": "idle",
  "rows": {
    "idle":  { "00": "idle/0", "01": "armed/0", "11": "-", "10": "idle/0" },
    "armed": { "00": "idle/0", "01": "armed/0", "11": "open/-", "10": "-" },
    "open":  { "00": "-", "01": "armed/0", "11": "open/1", "10": "idle/0" }
  }
}`;

const CANONICAL = `{
  "format": "quiesce-flow-table",
  "version": 1,
  "name": "door_interlock",
  "inputs": ["door_closed", "key"],
  "outputs": ["unlock"],
  "states": ["idle", "armed", "open"],
  "reset": "idle",
  "rows": {
    "idle": { "00": "idle/0", "01": "armed/0", "10": "idle/0" },
    "armed": { "00": "idle/0", "01": "armed/0", "11": "open/-" },
    "open": { "01": "armed/0", "11": "open/1", "10": "idle/0" }
  },
  "settings": { "doubleChange": "guarded" }
}
`;

describe('JSON interchange', () => {
  it('reads the DESIGN.md example and prints it canonically, columns in Gray order', () => {
    const t = parseJson(DESIGN_EXAMPLE);
    expect(t.states).toEqual(['idle', 'armed', 'open']);
    expect(tableToJson(t)).toBe(CANONICAL);
    // "11" comes before "10", which a plain JS object would reorder
    expect(CANONICAL).toContain('"open": { "01": "armed/0", "11": "open/1", "10": "idle/0" }');
    expect(tablesEqual(interchangeToTable(JSON.parse(CANONICAL)), t)).toBe(true);
  });

  it('changing one cell changes one line', () => {
    const t = parseJson(CANONICAL);
    const u = parseJson(CANONICAL.replace('"11": "open/-"', '"11": "open/1"'));
    expect(changedLines(tableToJson(t), tableToJson(u))).toBe(1);
  });

  it('locates JSON syntax errors by line and column', () => {
    expect(issuesOf(() => parseJson('{\n  "format": "quiesce-flow-table"\n  "version": 1\n}'))).toEqual(['3:3: expected "," or "}" in an object, found """']);
    expect(issuesOf(() => parseJson('{"a": [1, 2,]}'))).toEqual(['1:13: a trailing comma before "]"']);
    expect(issuesOf(() => parseJson('{"a": "open'))).toEqual(['1:7: unterminated string']);
    expect(issuesOf(() => parseJson("{'a': 1}"))).toEqual(['1:2: expected a quoted key, found "\'"']);
    expect(issuesOf(() => parseJson('{"a": 1} {}'))).toEqual(['1:10: unexpected "{" after the document']);
    expect(issuesOf(() => parseJson('   '))).toEqual(['1:1: the file is empty']);
    expect(issuesOf(() => parseJson('{"rows": {"a": {}, "a": {}}}'))).toEqual(['1:20: duplicate key "a"']);
  });

  it('refuses deep nesting without overflowing the stack', () => {
    const deep = '['.repeat(100000);
    expect(issuesOf(() => parseJson(deep))).toEqual(['1:66: nested deeper than 64 levels']);
  });

  it('model errors keep their JSON path and gain the line and column of the value', () => {
    const src = CANONICAL.replace('"11": "open/1"', '"11": "opne/1"');
    try {
      parseJson(src);
      throw new Error('expected an error');
    } catch (e) {
      expect(e).toBeInstanceOf(FlowTableError);
      const [issue] = (e as FlowTableError).issues;
      expect(issue).toMatchObject({ where: 'rows.open["11"]', message: 'unknown state "opne"', hint: 'did you mean "open"?', line: 12 });
      expect(src.split('\n')[11]!.slice(issue!.column! - 1)).toMatch(/^"opne\/1"/);
    }
  });

  it('wrong types, unknown fields and duplicate names are named by path', () => {
    const doc = JSON.parse(CANONICAL) as Record<string, unknown>;
    expect(issuesOf(() => parseJson(JSON.stringify({ ...doc, inputs: 'door_closed' })))).toEqual(['inputs: Expected array, received string']);
    expect(issuesOf(() => parseJson(JSON.stringify({ ...doc, colour: 'red' })))).toEqual(['(document): unknown field "colour"']);
    expect(issuesOf(() => parseJson(JSON.stringify({ ...doc, inputs: ['key', 'key'] })))).toEqual(['inputs[1]: duplicate name "key"']);
    expect(issuesOf(() => parseJson(JSON.stringify({ ...doc, version: 2 })))).toEqual(['version: Invalid literal value, expected 1']);
  });

  it('keeps a "__proto__" key as data', () => {
    const v = readJson('{"__proto__": {"x": 1}}', new Map()) as Record<string, unknown>;
    expect(Object.keys(v)).toEqual(['__proto__']);
    expect(Object.getPrototypeOf(v)).toBe(Object.prototype);
  });

  it('round-trips random tables and prints valid JSON equal to the model\'s document (fast-check)', () => {
    fc.assert(
      fc.property(arbitraryTable(), (t) => {
        const json = tableToJson(t);
        const back = parseJson(json);
        expect(tablesEqual(back, t)).toBe(true);
        expect(tableToJson(back)).toBe(json);
        expect(JSON.parse(json)).toEqual(tableToInterchange(t));
      }),
      { numRuns: 300 },
    );
  });

  it('mangled JSON gives a located FlowTableError or a table (fast-check)', () => {
    fc.assert(
      fc.property(arbitraryTable({ maxInputs: 3, maxStates: 4 }), fc.nat(), fc.nat(3), fc.constantFrom('"', ',', '{', ']', 'x', '0', ''), (t, pos, del, ins) => {
        const src = tableToJson(t);
        const at = pos % (src.length + 1);
        expectLocatedOrOk(() => parseJson(src.slice(0, at) + ins + src.slice(at + del)));
      }),
      { numRuns: 300 },
    );
  });
});
