/**
 * The `.qfl` text source format (see docs/qfl-format.md): a line-oriented header, then either
 * a grid of cells (small tables) or a compact list of `STATE CUBE CELL` lines (many inputs).
 * A small exact hand-written parser: a tokenizer with positions, then one pass over statements,
 * then name resolution, so every problem is reported with its line and column.
 */
import {
  cellBits,
  countColumns,
  createTable,
  DOUBLE_CHANGE_POLICIES,
  grayKeys,
  keyToColumn,
  LIMITS,
  NAME_RULES,
  nearestName,
  NONE,
  settingsSchema,
  type DoubleChangePolicy,
  type FlowTable,
  type Scenario,
} from '../model';
import { coverRow, forEachCubeColumn, textToCube } from './cubes';
import { BARE_NAME, checkName, formatName, isKeyword, pluralize, quoteString, TEXT_KEYWORDS } from './names';
import { checkSourceText, collectIssues, splitLines, stripBom, type IssueList } from './source';

/** Tables with more inputs than this print in the compact `cells` form. */
export const GRID_MAX_INPUTS = 4;

/** One word of a source line. A quoted word keeps the text after its closing quote in `rest`. */
interface Token {
  value: string;
  quoted: boolean;
  rest: string;
  line: number;
  col: number;
  restCol: number;
}

const QUOTE_HINT = (v: string) => `write it as a JSON string: ${JSON.stringify(v)}`;

/** Reads a JSON string starting at the quote at `start`; returns its value and the index after it. */
function readString(text: string, start: number, line: number, issues: IssueList): { value: string; end: number } | null {
  let value = '';
  let i = start + 1;
  while (i < text.length) {
    const ch = text.charCodeAt(i);
    if (ch === 34) return { value, end: i + 1 };
    if (ch < 0x20) {
      issues.add(line, i + 1, `control character U+${ch.toString(16).padStart(4, '0').toUpperCase()} inside a string`, 'write it as an escape such as \\t or \\u0001');
      return null;
    }
    if (ch === 92) {
      const e = text[i + 1];
      const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
      if (e !== undefined && simple[e] !== undefined) {
        value += simple[e];
        i += 2;
        continue;
      }
      if (e === 'u' && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
        value += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
        i += 6;
        continue;
      }
      issues.add(line, i + 1, `bad escape "\\${e ?? ''}" in a string`, 'JSON escapes are \\" \\\\ \\/ \\b \\f \\n \\r \\t and \\uXXXX');
      return null;
    }
    value += text[i];
    i++;
  }
  issues.add(line, start + 1, 'unterminated string', 'close it with a " on the same line');
  return null;
}

/** Splits one line into tokens; null when the line has a lexical error (already recorded). */
function tokenizeLine(text: string, line: number, issues: IssueList): Token[] | null {
  const tokens: Token[] = [];
  let i = 0;
  while (i < text.length) {
    const ch = text[i]!;
    if (ch === ' ' || ch === '\t') {
      i++;
      continue;
    }
    if (ch === '#') break;
    const start = i;
    let value = '';
    let quoted = false;
    if (ch === '"') {
      const s = readString(text, i, line, issues);
      if (!s) return null;
      value = s.value;
      quoted = true;
      i = s.end;
    }
    const restStart = i;
    while (i < text.length) {
      const c = text[i]!;
      if (c === ' ' || c === '\t' || c === '#') break;
      if (c === '"') {
        issues.add(line, i + 1, 'a quote inside a word', 'put whitespace before a quoted name, or quote the whole name');
        return null;
      }
      const code = c.charCodeAt(0);
      if (code < 0x20 || code === 0x7f) {
        issues.add(line, i + 1, `control character U+${code.toString(16).padStart(4, '0').toUpperCase()}`, 'remove it; only spaces and tabs separate words');
        return null;
      }
      i++;
    }
    const rest = text.slice(restStart, i);
    tokens.push({ value: quoted ? value : rest, quoted, rest: quoted ? rest : '', line, col: start + 1, restCol: restStart + 1 });
  }
  return tokens;
}

/** A name token's value, or null (issue recorded) when it is not a valid name. */
function readName(tok: Token, what: string, issues: IssueList): string | null {
  if (tok.quoted && tok.rest !== '') {
    issues.add(tok.line, tok.restCol, `unexpected "${tok.rest}" after the quoted ${what}`, 'put whitespace between words');
    return null;
  }
  if (!tok.quoted && !BARE_NAME.test(tok.value)) {
    issues.add(tok.line, tok.col, `"${tok.value}" cannot be written bare as ${what}`, QUOTE_HINT(tok.value));
    return null;
  }
  const why = checkName(tok.value);
  if (why) {
    issues.add(tok.line, tok.col, `invalid ${what} ${JSON.stringify(tok.value)}`, NAME_RULES);
    return null;
  }
  return tok.value;
}

/** A plain word token (a key, a cube, a policy), quoted or not. */
function readWord(tok: Token, issues: IssueList): string | null {
  if (tok.quoted && tok.rest !== '') {
    issues.add(tok.line, tok.restCol, `unexpected "${tok.rest}" after a quoted word`, 'put whitespace between words');
    return null;
  }
  return tok.value;
}

interface Statement {
  keyword: Token;
  args: Token[];
}

interface ParsedCell {
  next: number;
  care: number;
  value: number;
}

/** Parses `.qfl` source into a table; throws FlowTableError listing every located problem. */
export function parseText(src: string): FlowTable {
  checkSourceText(src);
  const lines = splitLines(stripBom(src));
  return collectIssues((issues) => parseLines(lines, issues));
}

function parseLines(lines: string[], issues: IssueList): FlowTable {
  const header = new Map<string, Statement>();
  const scenarioStmts: Statement[] = [];
  let section: 'none' | 'grid' | 'cells' = 'none';
  let sectionStmt: Statement | undefined;
  const rows: Token[][] = [];
  let firstSeen = false;
  const broken = new Set<string>();

  for (let li = 0; li < lines.length; li++) {
    const tokens = tokenizeLine(lines[li]!, li + 1, issues);
    if (!tokens) {
      // a line with a lexical error still counts as the statement it starts with
      const word = /^[ \t]*([^ \t"#]+)/.exec(lines[li]!)?.[1];
      if (word && isKeyword(word)) broken.add(word);
      firstSeen = true;
      continue;
    }
    if (tokens.length === 0) continue;
    const head = tokens[0]!;
    const isStatement = !head.quoted && isKeyword(head.value);
    if (!firstSeen) {
      firstSeen = true;
      if (!(isStatement && head.value === 'flow')) issues.add(head.line, head.col, 'the first statement must be `flow NAME`', 'start the file with e.g. `flow door_interlock`');
    }
    if (!isStatement) {
      if (section === 'none') {
        const near = head.quoted ? undefined : nearestName(head.value, [...TEXT_KEYWORDS]);
        issues.add(head.line, head.col, `unknown statement "${head.value}"`, near ?? `statements are ${TEXT_KEYWORDS.join(', ')}; table rows go after a \`grid\` or \`cells\` line`);
      } else rows.push(tokens);
      continue;
    }
    const stmt: Statement = { keyword: head, args: tokens.slice(1) };
    const kw = head.value;
    if (kw === 'scenario') {
      scenarioStmts.push(stmt);
      continue;
    }
    if (kw === 'grid' || kw === 'cells') {
      if (sectionStmt) {
        issues.add(head.line, head.col, `a second table section \`${kw}\``, `the table already started with \`${sectionStmt.keyword.value}\` at ${sectionStmt.keyword.line}:${sectionStmt.keyword.col}; use one grid or one cells section`);
        section = 'none';
        continue;
      }
      sectionStmt = stmt;
      section = kw;
      continue;
    }
    const before = header.get(kw);
    if (before) {
      issues.add(head.line, head.col, `duplicate \`${kw}\` statement`, `first given at ${before.keyword.line}:${before.keyword.col}`);
      continue;
    }
    header.set(kw, stmt);
    // a header statement after the table section ends the section
    if (section !== 'none') section = 'none';
  }
  if (!firstSeen) {
    issues.add(1, 1, 'the source is empty', 'start with `flow NAME`, then `inputs`, `outputs`, `reset` and a `grid`');
    issues.throwIfAny();
  }
  return resolve(header, scenarioStmts, sectionStmt, rows, broken, issues);
}

function expectArgs(stmt: Statement, count: number, usage: string, issues: IssueList): boolean {
  if (stmt.args.length === count) return true;
  if (stmt.args.length > count) {
    const extra = stmt.args[count]!;
    issues.add(extra.line, extra.col, `unexpected "${extra.value}" after \`${stmt.keyword.value}\``, `write \`${usage}\``);
  } else issues.add(stmt.keyword.line, stmt.keyword.col, `\`${stmt.keyword.value}\` is missing its value`, `write \`${usage}\``);
  return false;
}

function checkUniqueNames(tokens: Token[], names: (string | null)[], what: string, issues: IssueList): void {
  const seen = new Map<string, Token>();
  names.forEach((n, i) => {
    if (n === null) return;
    const tok = tokens[i]!;
    const first = seen.get(n);
    if (first) issues.add(tok.line, tok.col, `duplicate ${what} ${JSON.stringify(n)}`, `first declared at ${first.line}:${first.col}`);
    else seen.set(n, tok);
  });
}

function readNameList(stmt: Statement, what: string, limit: number, issues: IssueList): (string | null)[] {
  if (stmt.args.length > limit) {
    const extra = stmt.args[limit]!;
    issues.add(extra.line, extra.col, `too many ${what}s: ${stmt.args.length} (at most ${limit})`, `Quiesce tables have at most ${limit} ${what}s`);
  }
  const names = stmt.args.map((t) => readName(t, what, issues));
  checkUniqueNames(stmt.args, names, what, issues);
  return names;
}

function resolve(header: Map<string, Statement>, scenarioStmts: Statement[], sectionStmt: Statement | undefined, rows: Token[][], broken: Set<string>, issues: IssueList): FlowTable {
  const at1 = { line: 1, col: 1 };
  const flowStmt = header.get('flow');
  const anchor = flowStmt?.keyword ?? at1;
  let name: string | null = null;
  if (!flowStmt) {
    if (!broken.has('flow')) issues.add(1, 1, 'missing `flow NAME`', 'the first statement names the table, e.g. `flow door_interlock`');
  } else if (expectArgs(flowStmt, 1, 'flow NAME', issues)) name = readName(flowStmt.args[0]!, 'table name', issues);

  let description: string | undefined;
  const about = header.get('about');
  if (about && expectArgs(about, 1, 'about "TEXT"', issues)) {
    const tok = about.args[0]!;
    if (!tok.quoted) issues.add(tok.line, tok.col, 'the description must be a quoted string', QUOTE_HINT(tok.value));
    else if (tok.rest !== '') issues.add(tok.line, tok.restCol, `unexpected "${tok.rest}" after the description`, 'the description is one JSON string');
    else if (tok.value.length > 4000) issues.add(tok.line, tok.col, `the description has ${tok.value.length} characters (at most 4000)`, 'shorten it');
    else description = tok.value;
  }

  const inputsStmt = header.get('inputs');
  let inputs: (string | null)[] = [];
  if (!inputsStmt) {
    if (!broken.has('inputs')) issues.add(anchor.line, anchor.col, 'missing `inputs` statement', 'list the input names in order, e.g. `inputs door_closed key`; character k of a column key is input k');
  } else inputs = readNameList(inputsStmt, 'input', LIMITS.inputs, issues);
  const outputsStmt = header.get('outputs');
  const outputs = outputsStmt ? readNameList(outputsStmt, 'output', LIMITS.outputs, issues) : [];
  const shapeOk = inputsStmt !== undefined && inputs.length <= LIMITS.inputs && outputs.length <= LIMITS.outputs;
  const n = inputs.length;
  const m = outputs.length;
  const columns = countColumns(Math.min(n, LIMITS.inputs));

  let doubleChange: DoubleChangePolicy = 'guarded';
  const dc = header.get('double-change');
  if (dc && expectArgs(dc, 1, 'double-change POLICY', issues)) {
    const tok = dc.args[0]!;
    const v = readWord(tok, issues);
    if (v !== null) {
      if ((DOUBLE_CHANGE_POLICIES as readonly string[]).includes(v)) doubleChange = v as DoubleChangePolicy;
      else issues.add(tok.line, tok.col, `unknown double-change policy "${v}"`, nearestName(v, [...DOUBLE_CHANGE_POLICIES]) ?? `one of ${DOUBLE_CHANGE_POLICIES.join(', ')}`);
    }
  }
  let prefix: string | undefined;
  const pf = header.get('prefix');
  if (pf && expectArgs(pf, 1, 'prefix NAME', issues)) {
    const tok = pf.args[0]!;
    const v = readWord(tok, issues);
    if (v !== null) {
      const r = settingsSchema.shape.prefix.safeParse(v);
      if (r.success) prefix = v;
      else issues.add(tok.line, tok.col, `invalid prefix "${v}"`, r.error.issues[0]?.message);
    }
  }

  // states: from the `states` line, else from the grid rows in order
  const statesStmt = header.get('states');
  const stateTokens: Token[] = [];
  let states: (string | null)[] = [];
  // row -> state index, for rows whose state is known
  const rowStates = new Map<Token[], number>();
  if (statesStmt) {
    if (statesStmt.args.length === 0) issues.add(statesStmt.keyword.line, statesStmt.keyword.col, '`states` lists no state', 'write `states NAME NAME ...`');
    states = readNameList(statesStmt, 'state', LIMITS.states, issues);
    stateTokens.push(...statesStmt.args);
  } else if (sectionStmt?.keyword.value === 'grid') {
    const seen = new Map<string, Token>();
    for (const row of rows) {
      const tok = row[0]!;
      const s = readName(tok, 'state', issues);
      if (s === null) continue;
      const first = seen.get(s);
      if (first) {
        issues.add(tok.line, tok.col, `duplicate row for state ${JSON.stringify(s)}`, `its row is at ${first.line}:${first.col}`);
        continue;
      }
      seen.set(s, tok);
      rowStates.set(row, states.length);
      states.push(s);
      stateTokens.push(tok);
    }
    if (states.length > LIMITS.states) {
      const t = stateTokens[LIMITS.states]!;
      issues.add(t.line, t.col, `too many states: ${states.length} (at most ${LIMITS.states})`, `Quiesce tables have at most ${LIMITS.states} states`);
    }
  } else if (sectionStmt?.keyword.value === 'cells') {
    issues.add(sectionStmt.keyword.line, sectionStmt.keyword.col, 'the compact `cells` form needs a `states` line', 'list the states in order before `cells`, e.g. `states idle armed open`');
  } else {
    issues.add(anchor.line, anchor.col, 'the table has no states', 'add a `grid` section, or a `states` line and a `cells` section');
  }
  if (states.length === 0 && (statesStmt || sectionStmt?.keyword.value === 'grid')) {
    const at = statesStmt?.keyword ?? sectionStmt!.keyword;
    if (!statesStmt) issues.add(at.line, at.col, 'the grid has no rows', 'write one row per state: NAME CELL CELL ...');
  }
  const stateIndex = new Map<string, number>();
  states.forEach((s, i) => {
    if (s === null) return;
    if (s === '-') {
      const tok = stateTokens[i]!;
      issues.add(tok.line, tok.col, 'a state cannot be named "-"', '"-" marks an unspecified cell');
    }
    if (!stateIndex.has(s)) stateIndex.set(s, i);
  });
  const stateNames = states.map((s) => s ?? '');
  const unknownState = (tok: Token, s: string) =>
    issues.add(tok.line, tok.col, `unknown state ${JSON.stringify(s)}`, nearestName(s, stateNames) ?? (statesStmt ? 'add it to the `states` line' : 'every state needs its own grid row'));

  if (statesStmt && sectionStmt) {
    const seenRow = new Map<number, Token>();
    for (const row of rows) {
      const tok = row[0]!;
      const s = readName(tok, 'state', issues);
      if (s === null) continue;
      const i = stateIndex.get(s);
      if (i === undefined) {
        unknownState(tok, s);
        continue;
      }
      if (sectionStmt.keyword.value === 'grid') {
        const first = seenRow.get(i);
        if (first) {
          issues.add(tok.line, tok.col, `duplicate row for state ${JSON.stringify(s)}`, `its row is at ${first.line}:${first.col}`);
          continue;
        }
        seenRow.set(i, tok);
      }
      rowStates.set(row, i);
    }
  }

  let reset: number | undefined;
  const resetStmt = header.get('reset');
  if (!resetStmt) {
    if (!broken.has('reset')) issues.add(anchor.line, anchor.col, 'missing `reset STATE`', 'name the state the controller starts from, e.g. `reset idle`');
  } else if (expectArgs(resetStmt, 1, 'reset STATE', issues)) {
    const tok = resetStmt.args[0]!;
    const s = readName(tok, 'state', issues);
    if (s !== null) {
      reset = stateIndex.get(s);
      if (reset === undefined && states.length) unknownState(tok, s);
    }
  }

  const scenarios: Scenario[] = [];
  if (scenarioStmts.length > 200) {
    const t = scenarioStmts[200]!.keyword;
    issues.add(t.line, t.col, `too many scenarios: ${scenarioStmts.length} (at most 200)`, 'keep the important ones');
  }
  const scenarioNames = new Map<string, Token>();
  for (const stmt of scenarioStmts) {
    const [nameTok, ...vecToks] = stmt.args;
    if (!nameTok) {
      issues.add(stmt.keyword.line, stmt.keyword.col, '`scenario` needs a name and input vectors', 'write `scenario "NAME" KEY KEY ...`; the first key is the power-up inputs');
      continue;
    }
    const sname = readWord(nameTok, issues);
    if (sname === null) continue;
    if (sname.length < 1 || sname.length > LIMITS.nameLength) {
      issues.add(nameTok.line, nameTok.col, `a scenario name is 1 to ${LIMITS.nameLength} characters`, 'shorten it');
      continue;
    }
    const first = scenarioNames.get(sname);
    if (first) issues.add(nameTok.line, nameTok.col, `duplicate scenario ${JSON.stringify(sname)}`, `first given at ${first.line}:${first.col}`);
    else scenarioNames.set(sname, nameTok);
    if (vecToks.length === 0) {
      issues.add(nameTok.line, nameTok.col, `scenario ${JSON.stringify(sname)} has no input vectors`, 'list column keys after the name; the first is the power-up inputs');
      continue;
    }
    if (vecToks.length > 10000) {
      const t = vecToks[10000]!;
      issues.add(t.line, t.col, `scenario has ${vecToks.length} vectors (at most 10000)`, 'split it into several scenarios');
      continue;
    }
    const vectors: string[] = [];
    for (const vt of vecToks) {
      const v = readWord(vt, issues);
      if (v === null) continue;
      if (shapeOk && !isColumnKey(v, n)) issues.add(vt.line, vt.col, `"${v}" is not a column key of ${pluralize(n, 'character')} 0 or 1`, describeKeys(inputs));
      vectors.push(v);
    }
    scenarios.push({ name: sname, inputs: vectors });
  }

  const cells = shapeOk && states.length > 0 && states.length <= LIMITS.states ? readSection(sectionStmt, rows, rowStates, stateIndex, states.length, n, m, inputs, outputs, columns, unknownState, issues) : null;

  issues.throwIfAny();
  if (name === null || reset === undefined || cells === null) throw new Error('parseText: incomplete table without a recorded issue');
  const t = createTable({
    name,
    inputs: inputs as string[],
    outputs: outputs as string[],
    states: states as string[],
    reset,
    ...(description !== undefined ? { description } : {}),
    settings: { doubleChange, ...(prefix !== undefined ? { prefix } : {}) },
    scenarios,
  });
  t.next.set(cells.next);
  t.outCare.set(cells.care);
  t.outValue.set(cells.value);
  return t;
}

function isColumnKey(v: string, n: number): boolean {
  if (v.length !== n) return false;
  for (let i = 0; i < n; i++) if (v[i] !== '0' && v[i] !== '1') return false;
  return true;
}

function describeKeys(inputs: (string | null)[]): string {
  return inputs.length ? `character k is input k: ${inputs.map((s) => (s === null ? '?' : formatName(s))).join(' ')}` : 'the table has no inputs, so the only key is ""';
}

function readSection(
  sectionStmt: Statement | undefined,
  rows: Token[][],
  rowStates: Map<Token[], number>,
  stateIndex: Map<string, number>,
  total: number,
  n: number,
  m: number,
  inputs: (string | null)[],
  outputs: (string | null)[],
  columns: number,
  unknownState: (tok: Token, s: string) => void,
  issues: IssueList,
): { next: Int16Array; care: Uint32Array; value: Uint32Array } {
  const next = new Int16Array(total * columns).fill(NONE);
  const care = new Uint32Array(total * columns);
  const value = new Uint32Array(total * columns);
  if (!sectionStmt) return { next, care, value };

  const parseCell = (tok: Token): ParsedCell | null => {
    let nextName: string;
    let bits: string | undefined;
    let bitsCol: number;
    if (tok.quoted) {
      nextName = tok.value;
      if (tok.rest !== '' && !tok.rest.startsWith('/')) {
        issues.add(tok.line, tok.restCol, `unexpected "${tok.rest}" after the quoted state`, 'a cell is NEXT or NEXT/BITS');
        return null;
      }
      bits = tok.rest === '' ? undefined : tok.rest.slice(1);
      bitsCol = tok.restCol + 1;
    } else {
      if (tok.value === '-') return { next: NONE, care: 0, value: 0 };
      const slash = tok.value.indexOf('/');
      nextName = slash < 0 ? tok.value : tok.value.slice(0, slash);
      bits = slash < 0 ? undefined : tok.value.slice(slash + 1);
      bitsCol = tok.col + slash + 1;
      if (nextName === '') {
        issues.add(tok.line, tok.col, `cell "${tok.value}" has no next state`, 'a cell is `-`, NEXT or NEXT/BITS');
        return null;
      }
      if (!BARE_NAME.test(nextName)) {
        issues.add(tok.line, tok.col, `"${nextName}" cannot be written bare as a state`, `${QUOTE_HINT(nextName)}, or \`-\` for an unspecified cell`);
        return null;
      }
    }
    const s = stateIndex.get(nextName);
    if (s === undefined) {
      unknownState(tok, nextName);
      return null;
    }
    let c = 0;
    let v = 0;
    if (bits !== undefined) {
      if (m === 0) {
        issues.add(tok.line, bitsCol - 1, `cell has output bits "${bits}" but the table has no outputs`, 'write just the next state');
        return null;
      }
      if (bits.length !== m || !/^[01-]*$/.test(bits)) {
        issues.add(tok.line, bitsCol, `output bits "${bits}" are not ${pluralize(m, 'character')} of 0, 1 and -`, `one character per output, in the order ${formatOutputs(outputs)}`);
        return null;
      }
      for (let k = 0; k < m; k++) {
        if (bits[k] === '0') c |= 1 << k;
        else if (bits[k] === '1') {
          c |= 1 << k;
          v |= 1 << k;
        }
      }
    }
    return { next: s, care: c >>> 0, value: v >>> 0 };
  };

  if (sectionStmt.keyword.value === 'grid') {
    const keyCols: number[] = [];
    const seenKey = new Map<string, Token>();
    let headerOk = true;
    for (const kt of sectionStmt.args) {
      const k = readWord(kt, issues);
      if (k === null) {
        headerOk = false;
        continue;
      }
      if (!isColumnKey(k, n)) {
        // one report for the header: a wrong width usually repeats in every key
        if (headerOk) issues.add(kt.line, kt.col, `"${k}" is not a column key of ${pluralize(n, 'character')} 0 or 1`, describeKeys(inputs));
        headerOk = false;
        continue;
      }
      const first = seenKey.get(k);
      if (first) {
        issues.add(kt.line, kt.col, `duplicate column key "${k}" in the grid header`, `first at ${first.line}:${first.col}`);
        headerOk = false;
        continue;
      }
      seenKey.set(k, kt);
      keyCols.push(keyToColumn(k));
    }
    if (headerOk && seenKey.size !== columns) {
      const missing = grayKeys(n).filter((k) => !seenKey.has(k));
      const kw = sectionStmt.keyword;
      issues.add(kw.line, kw.col, `the grid header lacks ${pluralize(missing.length, 'column key')}: ${missing.slice(0, 8).map(formatKey).join(' ')}${missing.length > 8 ? ' ...' : ''}`, `list each of the ${columns} column keys once, e.g. \`grid ${grayKeys(n).slice(0, 4).map(formatKey).join(' ')}${columns > 4 ? ' ...' : ''}\``);
      headerOk = false;
    }
    for (const row of rows) {
      const head = row[0]!;
      const s = rowStates.get(row);
      if (s === undefined) continue;
      if (!headerOk) continue;
      const cellToks = row.slice(1);
      if (cellToks.length !== keyCols.length) {
        issues.add(head.line, head.col, `grid row has ${pluralize(cellToks.length, 'cell')}, the header has ${pluralize(keyCols.length, 'column')}`, 'write one cell per header column; `-` marks an unspecified cell');
        continue;
      }
      cellToks.forEach((ct, i) => {
        const cell = parseCell(ct);
        if (!cell) return;
        const at = s * columns + keyCols[i]!;
        next[at] = cell.next;
        care[at] = cell.care;
        value[at] = cell.value;
      });
    }
    return { next, care, value };
  }

  // compact form: STATE CUBE CELL; overlapping cubes must give the same cell
  const origin = new Int32Array(total * columns).fill(-1);
  for (const row of rows) {
    const head = row[0]!;
    if (row.length !== 3) {
      issues.add(head.line, head.col, `a \`cells\` line is STATE CUBE CELL, found ${pluralize(row.length, 'word')}`, `e.g. \`${formatName(head.value)} ${'-'.repeat(n) || '""'} NEXT${m ? `/${'-'.repeat(m)}` : ''}\``);
      continue;
    }
    const s = rowStates.get(row);
    const cubeTok = row[1]!;
    const cubeText = readWord(cubeTok, issues);
    const cell = parseCell(row[2]!);
    if (cubeText === null) continue;
    const cube = cubeText.length === n ? textToCube(cubeText) : null;
    if (!cube) {
      issues.add(cubeTok.line, cubeTok.col, `cube "${cubeText}" is not ${pluralize(n, 'character')} of 0, 1 and -`, `${describeKeys(inputs)}; \`-\` covers both values`);
      continue;
    }
    if (s === undefined || !cell) continue;
    let conflict = -1;
    forEachCubeColumn(cube, (c) => {
      if (conflict >= 0) return;
      const at = s * columns + c;
      const o = origin[at]!;
      if (o >= 0 && (next[at] !== cell.next || care[at] !== cell.care || value[at] !== cell.value)) {
        conflict = c;
        return;
      }
      origin[at] = head.line;
      next[at] = cell.next;
      care[at] = cell.care;
      value[at] = cell.value;
    });
    if (conflict >= 0) {
      const at = s * columns + conflict;
      const ct = row[2]!;
      const was = formatCellText(next[at]!, care[at]!, value[at]!, m, stateIndex);
      issues.add(ct.line, ct.col, `cell (${formatName(head.value)}, ${formatKey(keyOfColumn(conflict, n))}) is already "${was}" from line ${origin[at]}`, 'overlapping cubes must give the same cell; narrow one of the cubes');
    }
  }
  return { next, care, value };
}

function formatOutputs(outputs: (string | null)[]): string {
  return outputs.map((s) => (s === null ? '?' : formatName(s))).join(' ');
}

function keyOfColumn(column: number, n: number): string {
  let s = '';
  for (let k = 0; k < n; k++) s += (column >> k) & 1 ? '1' : '0';
  return s;
}

function formatKey(k: string): string {
  return k === '' ? '""' : k;
}

function formatCellText(next: number, care: number, value: number, m: number, stateIndex: Map<string, number>): string {
  if (next === NONE) return '-';
  let name = '';
  for (const [s, i] of stateIndex) if (i === next) name = s;
  if (m === 0) return name;
  let bits = '';
  for (let k = 0; k < m; k++) bits += (care >>> k) & 1 ? ((value >>> k) & 1 ? '1' : '0') : '-';
  return `${name}/${bits}`;
}

// ---------------------------------------------------------------------------------------------
// canonical printer

/** A cell as `.qfl` writes it: `-`, NEXT (no outputs) or NEXT/BITS, the state quoted when needed. */
function printCell(t: FlowTable, cell: number): string {
  const nx = t.next[cell]!;
  if (nx === NONE) return '-';
  const name = formatName(t.states[nx]!);
  return t.outputs.length === 0 ? name : `${name}/${cellBits(t, cell)}`;
}

function joinAligned(cells: string[], widths: number[]): string {
  return cells
    .map((c, i) => (i === cells.length - 1 ? c : c.padEnd(widths[i]! + 2)))
    .join('')
    .trimEnd();
}

/** Prints a table as canonical `.qfl` source: `parseText(tableToText(t))` equals `t`. */
export function tableToText(t: FlowTable): string {
  const n = t.inputs.length;
  const m = t.outputs.length;
  const out: string[] = [];
  const list = (kw: string, names: string[]) => [kw, ...names.map(formatName)].join(' ');
  out.push(`flow ${formatName(t.name)}`);
  if (t.description !== undefined) out.push(`about ${quoteString(t.description)}`);
  out.push(list('inputs', t.inputs));
  out.push(list('outputs', t.outputs));
  const compact = n > GRID_MAX_INPUTS;
  if (compact) out.push(list('states', t.states));
  out.push(`reset ${formatName(t.states[t.reset]!)}`);
  out.push(`double-change ${t.settings.doubleChange}`);
  if (t.settings.prefix !== undefined) out.push(`prefix ${t.settings.prefix}`);
  for (const sc of t.scenarios) out.push(['scenario', quoteString(sc.name), ...sc.inputs.map(formatKey)].join(' '));
  out.push('');
  const cols = countColumns(n);
  const printedStates = t.states.map(formatName);
  const labelW = Math.max(1, ...printedStates.map((s) => s.length));
  if (!compact) {
    // widths depend on names only, so changing one cell changes one line
    const keys = grayKeys(n);
    const cellW = Math.max(1, ...keys.map((k) => formatKey(k).length), ...printedStates.map((s) => s.length + (m ? m + 1 : 0)));
    const lead = Math.max(6, labelW + 4);
    const widths = keys.map(() => cellW);
    out.push(`${'grid'.padEnd(lead)}${joinAligned(keys.map(formatKey), widths)}`.trimEnd());
    t.states.forEach((_, s) => {
      const cells = keys.map((k) => printCell(t, s * cols + keyToColumn(k)));
      out.push(`  ${printedStates[s]!.padEnd(lead - 2)}${joinAligned(cells, widths)}`.trimEnd());
    });
  } else {
    out.push('cells');
    t.states.forEach((_, s) => {
      const lines = coverRow(t, s).map((r) => ({ cube: r.text, text: printCell(t, r.cell) }));
      for (const l of lines) out.push(`  ${printedStates[s]!.padEnd(labelW)}  ${l.cube}  ${l.text}`);
    });
  }
  return `${out.join('\n')}\n`;
}

