/**
 * The Quiesce CSV layout (docs/qfl-format.md, "CSV"): `#` metadata rows, a header row
 * `state,KEY,KEY,...`, then one row per state. RFC 4180 quoting, read and written here so that
 * every problem can name its line, column and spreadsheet cell.
 */
import {
  cellBits,
  countColumns,
  createTable,
  DOUBLE_CHANGE_POLICIES,
  grayKeys,
  keyToColumn,
  LIMITS,
  nearestName,
  NONE,
  settingsSchema,
  type DoubleChangePolicy,
  type FlowTable,
  type Scenario,
} from '../model';
import { checkName, pluralize } from './names';
import { checkSourceText, collectIssues, stripBom, type IssueList } from './source';

/** Options of the CSV importer. */
export interface CsvOptions {
  /** Table name used when the file has no `#flow` row. */
  name?: string;
}

/** One CSV field with where it starts in the text. */
export interface CsvField {
  text: string;
  line: number;
  col: number;
}

/** One CSV record (a spreadsheet row) with its 1-based record number. */
export interface CsvRecord {
  row: number;
  fields: CsvField[];
}

/** Reads RFC 4180 CSV (CRLF, LF or CR line ends; `"` quoting with `""` for a quote); located errors. */
export function readCsvRecords(text: string, issues: IssueList): CsvRecord[] {
  const records: CsvRecord[] = [];
  let fields: CsvField[] = [];
  let line = 1;
  let lineStart = 0;
  let i = 0;
  const n = text.length;
  const endRecord = () => {
    records.push({ row: records.length + 1, fields });
    fields = [];
  };
  const newline = (at: number): number => {
    // returns the index after the line break at `at`
    const next = text.charCodeAt(at) === 13 && text.charCodeAt(at + 1) === 10 ? at + 2 : at + 1;
    line++;
    lineStart = next;
    return next;
  };
  if (n === 0) return records;
  for (;;) {
    const fLine = line;
    const fCol = i - lineStart + 1;
    let value = '';
    if (text[i] === '"') {
      i++;
      for (;;) {
        if (i >= n) {
          issues.add(fLine, fCol, 'unterminated quoted field', 'close the field with a quote; a quote inside a field is written ""');
          return records;
        }
        const ch = text[i]!;
        if (ch === '"') {
          if (text[i + 1] === '"') {
            value += '"';
            i += 2;
            continue;
          }
          i++;
          break;
        }
        if (ch === '\r' || ch === '\n') {
          value += ch === '\r' && text[i + 1] === '\n' ? '\r\n' : ch;
          i = newline(i);
          continue;
        }
        value += ch;
        i++;
      }
      if (i < n && text[i] !== ',' && text[i] !== '\r' && text[i] !== '\n') {
        issues.add(line, i - lineStart + 1, `unexpected "${text[i]}" after a closing quote`, 'a quoted field ends at a comma or the end of the line');
        while (i < n && text[i] !== ',' && text[i] !== '\r' && text[i] !== '\n') i++;
      }
    } else {
      const start = i;
      while (i < n && text[i] !== ',' && text[i] !== '\r' && text[i] !== '\n') {
        if (text[i] === '"') {
          issues.add(line, i - lineStart + 1, 'a quote inside an unquoted field', 'quote the whole field and write the quote as ""');
        }
        i++;
      }
      value = text.slice(start, i);
    }
    fields.push({ text: value, line: fLine, col: fCol });
    if (i >= n) {
      endRecord();
      return records;
    }
    if (text[i] === ',') {
      i++;
      continue;
    }
    // a line break ends the record; a break at the very end adds no empty record
    i = newline(i);
    endRecord();
    if (i >= n) return records;
  }
}

/** Spreadsheet column letters of a 0-based field index (0 = A, 26 = AA). */
function toColumnLetters(index: number): string {
  let s = '';
  let k = index + 1;
  while (k > 0) {
    const r = (k - 1) % 26;
    s = String.fromCharCode(65 + r) + s;
    k = Math.floor((k - 1) / 26);
  }
  return s;
}

const METADATA = ['#flow', '#about', '#inputs', '#outputs', '#reset', '#double-change', '#prefix', '#scenario'];

/** A column key read from CSV; a spreadsheet may have dropped leading zeros ("01" shown as 1). */
function readKey(text: string, n: number): string | null {
  const t = text.trim();
  if (!/^[01]*$/.test(t) || t.length > n) return null;
  if (t.length === n) return t;
  return t.length === 0 ? null : t.padStart(n, '0');
}

/** Parses the Quiesce CSV layout into a table; throws FlowTableError with every located problem. */
export function parseCsv(src: string, opts: CsvOptions = {}): FlowTable {
  checkSourceText(src);
  const text = stripBom(src);
  return collectIssues((issues) => {
    const records = readCsvRecords(text, issues);
    issues.throwIfAny();
    return readLayout(records, opts, issues);
  });
}

function readLayout(records: CsvRecord[], opts: CsvOptions, issues: IssueList): FlowTable {
  const at = (rec: CsvRecord, fi: number, message: string, hint?: string) => {
    const f = rec.fields[fi] ?? rec.fields[rec.fields.length - 1]!;
    issues.add(f.line, fi < rec.fields.length ? f.col : f.col + f.text.length, `${message} (cell ${toColumnLetters(fi)}${rec.row})`, hint);
  };
  const meta = new Map<string, CsvRecord>();
  const scenarioRecs: CsvRecord[] = [];
  let headerRec: CsvRecord | undefined;
  const rowRecs: CsvRecord[] = [];
  for (const rec of records) {
    const first = rec.fields[0]!.text;
    if (rec.fields.every((f) => f.text.trim() === '')) continue;
    // after the header row every row is a state row, whatever its name
    if (headerRec) {
      rowRecs.push(rec);
      continue;
    }
    if (first === '#') continue;
    if (first.startsWith('#')) {
      if (!METADATA.includes(first)) {
        at(rec, 0, `unknown metadata row "${first}"`, nearestName(first, METADATA) ?? `known rows: ${METADATA.join(' ')}; a row starting with "#" alone is a comment`);
        continue;
      }
      if (first === '#scenario') {
        scenarioRecs.push(rec);
        continue;
      }
      const before = meta.get(first);
      if (before) {
        at(rec, 0, `duplicate ${first} row`, `first given in row ${before.row}`);
        continue;
      }
      meta.set(first, rec);
      continue;
    }
    if (first !== 'state') {
      at(rec, 0, `expected the header row "state,KEY,KEY,...", found "${first}"`, 'the header row starts with the word state, then lists every column key once');
      return issues.throwIfAny() as never;
    }
    headerRec = rec;
  }

  // metadata values: trailing empty fields (added by spreadsheets) are dropped
  const values = (rec: CsvRecord): CsvField[] => {
    const vs = rec.fields.slice(1);
    while (vs.length && vs[vs.length - 1]!.text === '') vs.pop();
    return vs;
  };
  const single = (key: string): { rec: CsvRecord; field: CsvField } | undefined => {
    const rec = meta.get(key);
    if (!rec) return undefined;
    const vs = values(rec);
    if (vs.length !== 1) {
      at(rec, vs.length ? 2 : 1, vs.length ? `${key} takes one value` : `${key} needs a value`, `write ${key},VALUE`);
      return undefined;
    }
    return { rec, field: vs[0]! };
  };
  const nameList = (key: string, what: string, limit: number): string[] | null => {
    const rec = meta.get(key);
    if (!rec) return [];
    const vs = values(rec);
    if (vs.length > limit) {
      at(rec, limit + 1, `too many ${what}s: ${vs.length} (at most ${limit})`, `Quiesce tables have at most ${limit} ${what}s`);
      return null;
    }
    const seen = new Map<string, number>();
    let ok = true;
    vs.forEach((f, i) => {
      const why = checkName(f.text);
      if (why) {
        at(rec, i + 1, `invalid ${what} name ${JSON.stringify(f.text)}`, why);
        ok = false;
      } else if (seen.has(f.text)) {
        at(rec, i + 1, `duplicate ${what} ${JSON.stringify(f.text)}`, `first in cell ${toColumnLetters(seen.get(f.text)!)}${rec.row}`);
        ok = false;
      } else seen.set(f.text, i + 1);
    });
    return ok ? vs.map((f) => f.text) : null;
  };

  let name: string | undefined = opts.name;
  const flow = single('#flow');
  if (flow) {
    const why = checkName(flow.field.text);
    if (why) at(flow.rec, 1, `invalid table name ${JSON.stringify(flow.field.text)}`, why);
    else name = flow.field.text;
  } else if (!meta.has('#flow') && name === undefined) issues.add(1, 1, 'missing #flow row', 'start the file with a row #flow,NAME');

  let description: string | undefined;
  const about = meta.get('#about');
  if (about) {
    const vs = values(about);
    const d = vs[0]?.text ?? '';
    if (vs.length > 1) at(about, 2, '#about takes one value', 'quote the description if it has commas');
    else if (d.length > 4000) at(about, 1, `the description has ${d.length} characters (at most 4000)`, 'shorten it');
    else description = d;
  }
  if (!meta.has('#inputs')) issues.add(1, 1, 'missing #inputs row', 'list the inputs in order: #inputs,NAME,NAME; character k of a column key is input k');
  const inputs = nameList('#inputs', 'input', LIMITS.inputs);
  const outputs = nameList('#outputs', 'output', LIMITS.outputs);

  let doubleChange: DoubleChangePolicy = 'guarded';
  const dc = single('#double-change');
  if (dc) {
    if ((DOUBLE_CHANGE_POLICIES as readonly string[]).includes(dc.field.text)) doubleChange = dc.field.text as DoubleChangePolicy;
    else at(dc.rec, 1, `unknown double-change policy "${dc.field.text}"`, nearestName(dc.field.text, [...DOUBLE_CHANGE_POLICIES]) ?? `one of ${DOUBLE_CHANGE_POLICIES.join(', ')}`);
  }
  let prefix: string | undefined;
  const pf = single('#prefix');
  if (pf) {
    const r = settingsSchema.shape.prefix.safeParse(pf.field.text);
    if (r.success) prefix = pf.field.text;
    else at(pf.rec, 1, `invalid prefix "${pf.field.text}"`, r.error.issues[0]?.message);
  }

  if (!headerRec) {
    issues.add(records.length ? records[records.length - 1]!.fields[0]!.line : 1, 1, 'missing the header row "state,KEY,KEY,..."', 'after the # rows, write the header row, then one row per state');
    return issues.throwIfAny() as never;
  }
  if (!inputs || !outputs || !meta.has('#inputs')) return issues.throwIfAny() as never;
  const n = inputs.length;
  const m = outputs.length;
  const columns = countColumns(n);
  const hdr = headerRec;

  const scenarios: Scenario[] = [];
  if (scenarioRecs.length > 200) at(scenarioRecs[200]!, 0, `too many scenarios: ${scenarioRecs.length} (at most 200)`, 'keep the important ones');
  const scenarioNames = new Map<string, number>();
  for (const rec of scenarioRecs) {
    // with no inputs every vector is the empty key, so empty fields count
    const vs = n === 0 ? rec.fields.slice(1) : values(rec);
    const [nm, ...vecs] = vs;
    if (!nm || nm.text.length < 1 || nm.text.length > LIMITS.nameLength) {
      at(rec, 1, `a scenario needs a name of 1 to ${LIMITS.nameLength} characters`, 'write #scenario,NAME,KEY,KEY,...');
      continue;
    }
    if (scenarioNames.has(nm.text)) at(rec, 1, `duplicate scenario ${JSON.stringify(nm.text)}`, `first in row ${scenarioNames.get(nm.text)}`);
    else scenarioNames.set(nm.text, rec.row);
    if (vecs.length === 0 || vecs.length > 10000) {
      at(rec, 1, vecs.length ? `scenario has ${vecs.length} vectors (at most 10000)` : `scenario ${JSON.stringify(nm.text)} has no input vectors`, 'list column keys after the name; the first is the power-up inputs');
      continue;
    }
    const keys: string[] = [];
    vecs.forEach((f, i) => {
      const k = n === 0 ? (f.text === '' ? '' : null) : readKey(f.text, n);
      if (k === null) at(rec, i + 2, `"${f.text}" is not a column key of ${pluralize(n, 'character')} 0 or 1`, `character k is input k: ${inputs.join(' ')}`);
      else keys.push(k);
    });
    scenarios.push({ name: nm.text, inputs: keys });
  }

  // header keys: every column key once
  let keyFields = hdr.fields.slice(1);
  if (n === 0) keyFields = keyFields.length ? keyFields.slice(0, 1) : [{ text: '', line: hdr.fields[0]!.line, col: hdr.fields[0]!.col + 5 }];
  else while (keyFields.length > columns && keyFields[keyFields.length - 1]!.text === '') keyFields.pop();
  const keyCols: number[] = [];
  const seenKey = new Map<string, number>();
  let headerOk = true;
  keyFields.forEach((f, i) => {
    const k = n === 0 ? (f.text === '' ? '' : null) : readKey(f.text, n);
    if (k === null) {
      if (headerOk) at(hdr, i + 1, `"${f.text}" is not a column key of ${pluralize(n, 'character')} 0 or 1`, n ? `character k is input k: ${inputs.join(' ')}` : 'with no inputs the only key is empty');
      headerOk = false;
      return;
    }
    if (seenKey.has(k)) {
      at(hdr, i + 1, `duplicate column key "${k}"`, `first in cell ${toColumnLetters(seenKey.get(k)!)}${hdr.row}`);
      headerOk = false;
      return;
    }
    seenKey.set(k, i + 1);
    keyCols.push(keyToColumn(k));
  });
  if (headerOk && seenKey.size !== columns) {
    const missing = grayKeys(n).filter((k) => !seenKey.has(k));
    at(hdr, 0, `the header row lacks ${pluralize(missing.length, 'column key')}: ${missing.slice(0, 8).join(' ')}${missing.length > 8 ? ' ...' : ''}`, `list each of the ${columns} column keys once`);
    headerOk = false;
  }

  // state rows
  const states: string[] = [];
  const stateRow = new Map<string, number>();
  for (const rec of rowRecs) {
    const s = rec.fields[0]!.text;
    const why = checkName(s);
    if (why) {
      at(rec, 0, `invalid state name ${JSON.stringify(s)}`, why);
      continue;
    }
    if (s === '-') {
      at(rec, 0, 'a state cannot be named "-"', '"-" marks an unspecified cell');
      continue;
    }
    if (stateRow.has(s)) {
      at(rec, 0, `duplicate row for state ${JSON.stringify(s)}`, `its row is row ${stateRow.get(s)}`);
      continue;
    }
    stateRow.set(s, rec.row);
    states.push(s);
  }
  if (states.length === 0) issues.add(hdr.fields[0]!.line, 1, 'the table has no state rows', 'add one row per state after the header row: NAME,CELL,CELL,...');
  if (states.length > LIMITS.states) at(rowRecs[LIMITS.states]!, 0, `too many states: ${states.length} (at most ${LIMITS.states})`, `Quiesce tables have at most ${LIMITS.states} states`);
  const index = new Map(states.map((s, i) => [s, i] as const));

  let reset = 0;
  const rs = single('#reset');
  if (rs) {
    const r = index.get(rs.field.text);
    if (r === undefined) at(rs.rec, 1, `unknown state ${JSON.stringify(rs.field.text)}`, nearestName(rs.field.text, states) ?? 'the reset state needs its own row');
    else reset = r;
  }
  if (!headerOk || states.length === 0 || states.length > LIMITS.states) return issues.throwIfAny() as never;

  const t = createTable({
    name: name ?? 'table',
    inputs,
    outputs,
    states,
    reset,
    ...(description !== undefined ? { description } : {}),
    settings: { doubleChange, ...(prefix !== undefined ? { prefix } : {}) },
    scenarios,
  });
  for (const rec of rowRecs) {
    const s = index.get(rec.fields[0]!.text);
    if (s === undefined || stateRow.get(rec.fields[0]!.text) !== rec.row) continue;
    let cells = rec.fields.slice(1);
    while (cells.length > keyCols.length && cells[cells.length - 1]!.text === '') cells.pop();
    if (n === 0 && cells.length === 0) cells = [{ text: '', line: rec.fields[0]!.line, col: rec.fields[0]!.col }];
    if (cells.length !== keyCols.length) {
      at(rec, 0, `row has ${pluralize(cells.length, 'cell')}, the header has ${pluralize(keyCols.length, 'column')}`, 'write one cell per header column; - marks an unspecified cell');
      continue;
    }
    cells.forEach((f, i) => {
      const raw = f.text.trim();
      if (raw === '' || raw === '-') return;
      const slash = raw.indexOf('/');
      const nextName = slash < 0 ? raw : raw.slice(0, slash);
      const bits = slash < 0 ? undefined : raw.slice(slash + 1);
      const nx = index.get(nextName);
      if (nx === undefined) {
        at(rec, i + 1, `unknown state ${JSON.stringify(nextName)}`, nearestName(nextName, states) ?? 'every state needs its own row');
        return;
      }
      if (bits !== undefined && m === 0) {
        at(rec, i + 1, `cell "${raw}" has output bits but the table has no outputs`, 'write just the next state');
        return;
      }
      if (bits !== undefined && (bits.length !== m || !/^[01-]*$/.test(bits))) {
        at(rec, i + 1, `output bits "${bits}" are not ${pluralize(m, 'character')} of 0, 1 and -`, `one character per output, in the order ${outputs.join(' ')}`);
        return;
      }
      const cell = s * columns + keyCols[i]!;
      t.next[cell] = nx;
      let care = 0;
      let val = 0;
      for (let k = 0; k < (bits?.length ?? 0); k++) {
        if (bits![k] === '0') care |= 1 << k;
        else if (bits![k] === '1') {
          care |= 1 << k;
          val |= 1 << k;
        }
      }
      t.outCare[cell] = care >>> 0;
      t.outValue[cell] = val >>> 0;
    });
  }
  issues.throwIfAny();
  return t;
}

/** One field as RFC 4180 writes it: quoted when it holds a comma, a quote or a line break. */
export function formatCsvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** Prints a table in the Quiesce CSV layout (CRLF line ends, columns in Gray order). */
export function tableToCsv(t: FlowTable): string {
  const rows: string[][] = [];
  rows.push(['#flow', t.name]);
  if (t.description !== undefined) rows.push(['#about', t.description]);
  rows.push(['#inputs', ...t.inputs]);
  rows.push(['#outputs', ...t.outputs]);
  rows.push(['#reset', t.states[t.reset]!]);
  rows.push(['#double-change', t.settings.doubleChange]);
  if (t.settings.prefix !== undefined) rows.push(['#prefix', t.settings.prefix]);
  for (const sc of t.scenarios) rows.push(['#scenario', sc.name, ...sc.inputs]);
  const keys = grayKeys(t.inputs.length);
  const cols = countColumns(t.inputs.length);
  rows.push(['state', ...keys]);
  t.states.forEach((s, si) => {
    rows.push([
      s,
      ...keys.map((k) => {
        const cell = si * cols + keyToColumn(k);
        const nx = t.next[cell]!;
        if (nx === NONE) return '-';
        return t.outputs.length ? `${t.states[nx]}/${cellBits(t, cell)}` : t.states[nx]!;
      }),
    ]);
  });
  return rows.map((r) => r.map(formatCsvField).join(',')).join('\r\n') + '\r\n';
}
