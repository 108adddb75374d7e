/**
 * JSON interchange documents (DESIGN.md §4). A small JSON reader of our own gives every syntax
 * error a line:column, refuses duplicate keys (which JSON.parse would silently drop), and
 * remembers where each value starts so that model errors, located by JSON path, also get one.
 * The writer keeps a fixed key order, with each row's columns in Gray order.
 */
import {
  cellToText,
  countColumns,
  FlowTableError,
  grayKeys,
  interchangeToTable,
  keyToColumn,
  NONE,
  type FlowTable,
} from '../model';
import { quoteString } from './names';
import { checkSourceText, collectIssues, offsetToLineColumn, stripBom, type IssueList } from './source';

/** Deepest nesting the reader accepts; interchange documents need four levels. */
export const MAX_JSON_DEPTH = 64;

/** Path of a value as the model names it: `rows.armed["11"]`, `inputs[2]`. */
function joinPath(parent: string, key: string | number): string {
  if (typeof key === 'number') return `${parent}[${key}]`;
  if (parent === '') return key;
  return /^[A-Za-z_][A-Za-z0-9_]*$/.test(key) ? `${parent}.${key}` : `${parent}[${JSON.stringify(key)}]`;
}

class JsonSyntax extends Error {
  constructor(
    readonly offset: number,
    message: string,
    readonly hint: string,
  ) {
    super(message);
  }
}

/** Reads a JSON text; `positions` maps each value's path (and each key's path) to its offset. */
export function readJson(text: string, positions: Map<string, number>): unknown {
  let i = 0;
  const n = text.length;
  const ws = () => {
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };
  const describe = (at: number) => (at >= n ? 'the end of the file' : `"${text[at]}"`);
  const readString = (): string => {
    const start = i;
    i++;
    let out = '';
    for (;;) {
      if (i >= n) throw new JsonSyntax(start, 'unterminated string', 'close the string with "');
      const c = text.charCodeAt(i);
      if (c === 34) {
        i++;
        return out;
      }
      if (c < 0x20) throw new JsonSyntax(i, 'a control character inside a string', 'write it as an escape such as \\n or \\u0001');
      if (c === 92) {
        const e = text[i + 1];
        const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
        if (e !== undefined && simple[e] !== undefined) {
          out += simple[e];
          i += 2;
          continue;
        }
        if (e === 'u' && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
          out += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
          i += 6;
          continue;
        }
        throw new JsonSyntax(i, `bad escape "\\${e ?? ''}"`, 'JSON escapes are \\" \\\\ \\/ \\b \\f \\n \\r \\t and \\uXXXX');
      }
      out += text[i];
      i++;
    }
  };
  const readValue = (path: string, depth: number): unknown => {
    ws();
    if (depth > MAX_JSON_DEPTH) throw new JsonSyntax(i, `nested deeper than ${MAX_JSON_DEPTH} levels`, 'an interchange document is an object of arrays and objects a few levels deep');
    positions.set(path, i);
    if (i >= n) throw new JsonSyntax(i, 'unexpected end of the file', 'the document is cut short');
    const c = text[i]!;
    if (c === '{') {
      i++;
      const obj: Record<string, unknown> = {};
      const keyAt = new Map<string, number>();
      ws();
      if (text[i] === '}') {
        i++;
        return obj;
      }
      for (;;) {
        ws();
        if (text[i] !== '"') throw new JsonSyntax(i, `expected a quoted key, found ${describe(i)}`, text[i] === '}' ? 'remove the comma before }' : 'object keys are JSON strings');
        const kStart = i;
        const key = readString();
        const first = keyAt.get(key);
        if (first !== undefined) {
          const p = offsetToLineColumn(text, first);
          throw new JsonSyntax(kStart, `duplicate key ${JSON.stringify(key)}`, `first at ${p.line}:${p.column}`);
        }
        keyAt.set(key, kStart);
        ws();
        if (text[i] !== ':') throw new JsonSyntax(i, `expected ":" after the key, found ${describe(i)}`, 'write "key": value');
        i++;
        const vPath = joinPath(path, key);
        const v = readValue(vPath, depth + 1);
        // defineProperty keeps a key such as "__proto__" as plain data
        Object.defineProperty(obj, key, { value: v, enumerable: true, writable: true, configurable: true });
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === '}') {
          i++;
          return obj;
        }
        throw new JsonSyntax(i, `expected "," or "}" in an object, found ${describe(i)}`, 'separate members with commas');
      }
    }
    if (c === '[') {
      i++;
      const arr: unknown[] = [];
      ws();
      if (text[i] === ']') {
        i++;
        return arr;
      }
      for (;;) {
        ws();
        if (text[i] === ']') throw new JsonSyntax(i, 'a trailing comma before "]"', 'remove the comma');
        arr.push(readValue(joinPath(path, arr.length), depth + 1));
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === ']') {
          i++;
          return arr;
        }
        throw new JsonSyntax(i, `expected "," or "]" in an array, found ${describe(i)}`, 'separate items with commas');
      }
    }
    if (c === '"') return readString();
    const num = /^-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (num && num[0].length) {
      i += num[0].length;
      return Number(num[0]);
    }
    for (const [word, v] of [
      ['true', true],
      ['false', false],
      ['null', null],
    ] as const) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return v;
      }
    }
    throw new JsonSyntax(i, `unexpected ${describe(i)}`, c === "'" ? 'JSON strings use double quotes' : 'expected a value: an object, array, string, number, true, false or null');
  };
  const v = readValue('', 0);
  ws();
  if (i < n) throw new JsonSyntax(i, `unexpected ${describe(i)} after the document`, 'a file holds one JSON document');
  return v;
}

/**
 * Parses an interchange document. JSON syntax errors are located as line:column; model errors
 * keep their JSON path as `where` and carry the line and column of the offending value.
 */
export function parseJson(src: string): FlowTable {
  checkSourceText(src);
  const text = stripBom(src);
  const positions = new Map<string, number>();
  const value = collectIssues((issues: IssueList) => {
    if (text.trim() === '') {
      issues.add(1, 1, 'the file is empty', 'an interchange document starts with {"format": "quiesce-flow-table", "version": 1, ...}');
      return undefined;
    }
    try {
      return readJson(text, positions);
    } catch (e) {
      if (!(e instanceof JsonSyntax)) throw e;
      const p = offsetToLineColumn(text, e.offset);
      issues.add(p.line, p.column, e.message, e.hint);
      return undefined;
    }
  });
  try {
    return interchangeToTable(value);
  } catch (e) {
    if (!(e instanceof FlowTableError)) throw e;
    throw new FlowTableError(
      e.issues.map((issue) => {
        const key = issue.where === '(document)' ? '' : issue.where;
        const offset = positions.get(key) ?? positions.get(getParentPath(key)) ?? 0;
        const p = offsetToLineColumn(text, offset);
        return { ...issue, line: p.line, column: p.column };
      }),
    );
  }
}

/** The path one level up: `rows.armed["11"]` to `rows.armed`. */
function getParentPath(path: string): string {
  const m = /^(.*?)(?:\.[A-Za-z_][A-Za-z0-9_]*|\[(?:\d+|"(?:[^"\\]|\\.)*")\])$/.exec(path);
  return m ? m[1]! : '';
}

const quote = quoteString;
const quoteList = (xs: string[]) => `[${xs.map(quote).join(', ')}]`;

/**
 * Prints a table as canonical interchange JSON: fixed key order, one line per row with its
 * specified cells in Gray order (so a one-cell change is a one-line diff), `\n` line ends.
 */
export function tableToJson(t: FlowTable): string {
  const cols = countColumns(t.inputs.length);
  const order = grayKeys(t.inputs.length);
  const lines: string[] = ['{', `  "format": "quiesce-flow-table",`, `  "version": 1,`, `  "name": ${quote(t.name)},`];
  if (t.description !== undefined) lines.push(`  "description": ${quote(t.description)},`);
  lines.push(`  "inputs": ${quoteList(t.inputs)},`, `  "outputs": ${quoteList(t.outputs)},`, `  "states": ${quoteList(t.states)},`, `  "reset": ${quote(t.states[t.reset]!)},`, '  "rows": {');
  t.states.forEach((s, si) => {
    const cells: string[] = [];
    for (const key of order) {
      const cell = si * cols + keyToColumn(key);
      if (t.next[cell] !== NONE) cells.push(`${quote(key)}: ${quote(cellToText(t, cell))}`);
    }
    lines.push(`    ${quote(s)}: ${cells.length ? `{ ${cells.join(', ')} }` : '{}'}${si < t.states.length - 1 ? ',' : ''}`);
  });
  const settings = [`"doubleChange": ${quote(t.settings.doubleChange)}`, ...(t.settings.prefix !== undefined ? [`"prefix": ${quote(t.settings.prefix)}`] : [])];
  lines.push('  },', `  "settings": { ${settings.join(', ')} }${t.scenarios.length ? ',' : ''}`);
  if (t.scenarios.length) {
    lines.push('  "scenarios": [');
    t.scenarios.forEach((sc, i) => lines.push(`    { "name": ${quote(sc.name)}, "inputs": ${quoteList(sc.inputs)} }${i < t.scenarios.length - 1 ? ',' : ''}`));
    lines.push('  ]');
  }
  lines.push('}');
  return `${lines.join('\n')}\n`;
}
