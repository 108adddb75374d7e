/**
 * KISS2 import and export, as the MCNC/LGSynth'91 benchmark files use the format
 * (see docs/qfl-format.md, "KISS2"): header lines `.i .o .p .s .r`, an optional
 * `.start_kiss`/`.end_kiss` wrapper, and transition lines `INPUTS CURRENT NEXT OUTPUTS`.
 */
import { cellBits, countColumns, createTable, FlowTableError, LIMITS, nameSchema, NONE, type FlowTable } from '../model';
import { coverRow, forEachCubeColumn, textToCube, type Cube } from './cubes';
import { checkName, pluralize } from './names';
import { checkSourceText, collectIssues, splitLines, stripBom, type IssueList } from './source';

/** Options of the KISS2 importer. */
export interface Kiss2Options {
  /** Table name (KISS2 has none); defaults to `kiss2`. */
  name?: string;
}

interface Field {
  text: string;
  col: number;
}

interface Transition {
  line: number;
  cube: Cube;
  cur: Field;
  next: Field;
  bits: string;
  bitsCol: number;
}

const DIRECTIVES = ['.i', '.o', '.p', '.s', '.r', '.ilb', '.ob', '.start_kiss', '.end_kiss', '.e', '.end'];

function splitFields(line: string): Field[] {
  const fields: Field[] = [];
  const re = /[^ \t]+/g;
  let m: RegExpExecArray | null;
  while ((m = re.exec(line))) fields.push({ text: m[0], col: m.index + 1 });
  return fields;
}

/** Parses KISS2 text into a table; throws FlowTableError with every located problem. */
export function parseKiss2(src: string, opts: Kiss2Options = {}): FlowTable {
  checkSourceText(src);
  const name = opts.name ?? 'kiss2';
  if (!nameSchema.safeParse(name).success) throw new FlowTableError([{ where: 'name', message: `invalid table name ${JSON.stringify(name)}`, hint: checkName(name) }]);
  const lines = splitLines(stripBom(src));
  return collectIssues((issues) => readKiss2(lines, name, issues));
}

function readKiss2(lines: string[], name: string, issues: IssueList): FlowTable {
  const header = new Map<string, { line: number; col: number; args: Field[] }>();
  const transitions: Transition[] = [];
  // states in the order the file first names them (current or next)
  const namedOrder: string[] = [];
  // states in the order of their first line as the current state
  const rowOrder: string[] = [];
  const hasRow = new Set<string>();
  const firstSeen = new Map<string, { line: number; col: number }>();
  let ni: number | undefined;
  let no: number | undefined;
  let shapeReported = false;

  const intArg = (dir: string, f: Field | undefined, line: number, col: number, limit?: number): number | undefined => {
    if (!f || !/^\d{1,7}$/.test(f.text)) {
      issues.add(line, f?.col ?? col, `\`${dir}\` needs a whole number${f ? `, found "${f.text}"` : ''}`, `e.g. \`${dir} 2\``);
      return undefined;
    }
    const v = Number(f.text);
    if (limit !== undefined && v > limit) {
      issues.add(line, f.col, `${dir === '.i' ? 'too many inputs' : 'too many outputs'}: ${v} (at most ${limit})`, `Quiesce tables have at most ${LIMITS.inputs} inputs and ${LIMITS.outputs} outputs`);
      return undefined;
    }
    return v;
  };

  const noteState = (f: Field, line: number) => {
    if (f.text === '*') return;
    if (firstSeen.has(f.text)) return;
    const why = checkName(f.text);
    if (why) {
      issues.add(line, f.col, `invalid state name "${f.text}"`, why);
      return;
    }
    if (f.text === '-') {
      issues.add(line, f.col, 'a state cannot be named "-"', '"-" marks an unspecified cell');
      return;
    }
    firstSeen.set(f.text, { line, col: f.col });
    namedOrder.push(f.text);
  };

  for (let li = 0; li < lines.length; li++) {
    const raw = lines[li]!;
    const hash = raw.indexOf('#');
    const fields = splitFields(hash >= 0 ? raw.slice(0, hash) : raw);
    if (fields.length === 0) continue;
    const line = li + 1;
    const head = fields[0]!;
    if (head.text.startsWith('.')) {
      const dir = head.text;
      if (!DIRECTIVES.includes(dir)) {
        issues.add(line, head.col, `unknown KISS2 directive "${dir}"`, `known: ${DIRECTIVES.join(' ')}`);
        continue;
      }
      if (dir === '.end_kiss' || dir === '.e' || dir === '.end') break;
      if (dir === '.start_kiss') continue;
      const before = header.get(dir);
      if (before) {
        issues.add(line, head.col, `duplicate \`${dir}\``, `first given at ${before.line}:${before.col}`);
        continue;
      }
      if (transitions.length && (dir === '.i' || dir === '.o')) {
        issues.add(line, head.col, `\`${dir}\` after the first transition line`, 'put the header before the transitions');
        continue;
      }
      header.set(dir, { line, col: head.col, args: fields.slice(1) });
      const args = fields.slice(1);
      if (dir === '.ilb' || dir === '.ob') continue;
      if (dir === '.r') {
        if (args.length !== 1) issues.add(line, args[1]?.col ?? head.col, '`.r` needs exactly one state name', 'e.g. `.r st0`');
        continue;
      }
      if (args.length > 1) issues.add(line, args[1]!.col, `unexpected "${args[1]!.text}" after \`${dir}\``, `\`${dir}\` takes one number`);
      const v = intArg(dir, args[0], line, head.col, dir === '.i' ? LIMITS.inputs : dir === '.o' ? LIMITS.outputs : undefined);
      if (dir === '.i') ni = v;
      if (dir === '.o') no = v;
      continue;
    }
    // a transition line: INPUTS CURRENT NEXT OUTPUTS (no INPUTS field when .i is 0, no OUTPUTS when .o is 0)
    if (ni === undefined || no === undefined) {
      if (!shapeReported) {
        shapeReported = true;
        const what = header.has('.i') && header.has('.o') ? 'valid `.i` and `.o` values' : `${!header.has('.i') ? '`.i`' : ''}${!header.has('.i') && !header.has('.o') ? ' and ' : ''}${!header.has('.o') ? '`.o`' : ''}`;
        issues.add(line, head.col, `a transition line before ${what}`, 'start the file with `.i N` and `.o M` (the numbers of inputs and outputs)');
      }
      continue;
    }
    const want = (ni > 0 ? 1 : 0) + 2 + (no > 0 ? 1 : 0);
    if (fields.length !== want) {
      const at = fields[want] ?? fields[fields.length - 1]!;
      issues.add(line, fields.length > want ? at.col : head.col, `a transition line has ${pluralize(fields.length, 'field')}, expected ${want}`, `write \`${ni > 0 ? 'INPUTS ' : ''}CURRENT NEXT${no > 0 ? ' OUTPUTS' : ''}\` with ${pluralize(ni, 'input character')} and ${pluralize(no, 'output character')}`);
      continue;
    }
    let f = 0;
    const cubeField = ni > 0 ? fields[f++]! : { text: '', col: head.col };
    const cur = fields[f++]!;
    const next = fields[f++]!;
    const outField = no > 0 ? fields[f++]! : { text: '', col: next.col + next.text.length };
    const cube = cubeField.text.length === ni ? textToCube(cubeField.text) : null;
    let ok = true;
    if (!cube) {
      issues.add(line, cubeField.col, `input cube "${cubeField.text}" is not ${pluralize(ni, 'character')} of 0, 1 and -`, `.i declares ${pluralize(ni, 'input')}; the leftmost character is the first input`);
      ok = false;
    }
    if (outField.text.length !== no || !/^[01-]*$/.test(outField.text)) {
      issues.add(line, outField.col, `outputs "${outField.text}" are not ${pluralize(no, 'character')} of 0, 1 and -`, `.o declares ${pluralize(no, 'output')}`);
      ok = false;
    }
    noteState(cur, line);
    noteState(next, line);
    if (cur.text !== '*' && firstSeen.has(cur.text) && !hasRow.has(cur.text)) {
      hasRow.add(cur.text);
      rowOrder.push(cur.text);
    }
    if (ok && cube) transitions.push({ line, cube, cur, next, bits: outField.text, bitsCol: outField.col });
  }

  if (!header.has('.i')) issues.add(1, 1, 'missing `.i` (number of inputs)', 'KISS2 files start with `.i N` and `.o M`');
  if (!header.has('.o')) issues.add(1, 1, 'missing `.o` (number of outputs)', 'KISS2 files start with `.i N` and `.o M`');
  if (ni === undefined || no === undefined) return issues.throwIfAny() as never;
  // rows in the order the file lists them, then states that only appear as next states
  const stateOrder = [...rowOrder, ...namedOrder.filter((s) => !hasRow.has(s))];

  // .s: fewer states than declared is tolerated (unused states have no name to give them); more is an error
  const sDecl = header.get('.s');
  const sCount = sDecl && /^\d{1,7}$/.test(sDecl.args[0]?.text ?? '') ? Number(sDecl.args[0]!.text) : undefined;
  if (sDecl && sCount === undefined) issues.add(sDecl.line, sDecl.args[0]?.col ?? sDecl.col, '`.s` needs a whole number', 'e.g. `.s 4`');
  if (sCount !== undefined && stateOrder.length > sCount) {
    const extra = namedOrder[sCount]!;
    const at = firstSeen.get(extra)!;
    issues.add(at.line, at.col, `state "${extra}" is state number ${sCount + 1}, but \`.s\` declares ${pluralize(sCount, 'state')}`, `fix \`.s\` at line ${sDecl!.line} (the file names ${pluralize(stateOrder.length, 'state')})`);
  }
  if (stateOrder.length > LIMITS.states) {
    const extra = namedOrder[LIMITS.states]!;
    const at = firstSeen.get(extra)!;
    issues.add(at.line, at.col, `too many states: ${stateOrder.length} (at most ${LIMITS.states})`, `Quiesce tables have at most ${LIMITS.states} states`);
  }

  const inputs = readLabels(header.get('.ilb'), ni, 'in', 'input', issues);
  const outputs = readLabels(header.get('.ob'), no, 'out', 'output', issues);

  // without `.r` the reset state is the first state the file names
  let reset = namedOrder.length ? stateOrder.indexOf(namedOrder[0]!) : 0;
  const r = header.get('.r');
  if (r && r.args.length === 1) {
    const rn = r.args[0]!.text;
    const idx = stateOrder.indexOf(rn);
    if (idx < 0) issues.add(r.line, r.args[0]!.col, `reset state "${rn}" appears in no transition line`, stateOrder.length ? `states named: ${stateOrder.slice(0, 6).join(' ')}${stateOrder.length > 6 ? ' ...' : ''}` : 'add transition lines');
    else reset = idx;
  }
  if (stateOrder.length === 0) issues.add(1, 1, 'the file has no states', 'add transition lines `INPUTS CURRENT NEXT OUTPUTS`');
  issues.throwIfAny();

  const t = createTable({ name, inputs, outputs, states: stateOrder, reset });
  const cols = countColumns(ni);
  const index = new Map(stateOrder.map((s, i) => [s, i] as const));
  const origin = new Int32Array(stateOrder.length * cols).fill(-1);
  for (const tr of transitions) {
    // `*` as the next state leaves the cells unspecified
    if (tr.next.text === '*') continue;
    const nx = index.get(tr.next.text)!;
    let care = 0;
    let value = 0;
    for (let k = 0; k < no; k++) {
      if (tr.bits[k] === '0') care |= 1 << k;
      else if (tr.bits[k] === '1') {
        care |= 1 << k;
        value |= 1 << k;
      }
    }
    care >>>= 0;
    value >>>= 0;
    const rows = tr.cur.text === '*' ? stateOrder.map((_, i) => i) : [index.get(tr.cur.text)!];
    let conflict: { state: number; column: number } | null = null;
    for (const s of rows) {
      forEachCubeColumn(tr.cube, (c) => {
        if (conflict) return;
        const at = s * cols + c;
        if (origin[at]! >= 0) {
          if (t.next[at] !== nx || t.outCare[at] !== care || t.outValue[at] !== value) conflict = { state: s, column: c };
          return;
        }
        origin[at] = tr.line;
        t.next[at] = nx;
        t.outCare[at] = care;
        t.outValue[at] = value;
      });
      if (conflict) break;
    }
    if (conflict) {
      const { state, column } = conflict as { state: number; column: number };
      const at = state * cols + column;
      const other = origin[at]!;
      let key = '';
      for (let k = 0; k < ni; k++) key += (column >> k) & 1 ? '1' : '0';
      issues.add(tr.line, tr.next.col, `conflicting transitions for state "${stateOrder[state]}" at inputs ${key || '""'}: line ${other} gives ${describeCell(t, at, no)}, this line gives ${tr.next.text}${no ? ` ${tr.bits}` : ''}`, 'overlapping lines must give the same next state and outputs; narrow one of the input cubes');
    }
  }
  issues.throwIfAny();
  return t;
}

function describeCell(t: FlowTable, cell: number, no: number): string {
  const nx = t.next[cell]!;
  if (nx === NONE) return '-';
  let bits = '';
  for (let k = 0; k < no; k++) bits += (t.outCare[cell]! >>> k) & 1 ? ((t.outValue[cell]! >>> k) & 1 ? '1' : '0') : '-';
  return `${t.states[nx]}${no ? ` ${bits}` : ''}`;
}

function readLabels(decl: { line: number; col: number; args: Field[] } | undefined, count: number, stem: string, what: string, issues: IssueList): string[] {
  const defaults = Array.from({ length: count }, (_, k) => `${stem}${k}`);
  if (!decl) return defaults;
  if (decl.args.length !== count) {
    issues.add(decl.line, decl.col, `${pluralize(decl.args.length, `${what} label`)}, but the header declares ${pluralize(count, what)}`, `give one label per ${what}`);
    return defaults;
  }
  const seen = new Map<string, Field>();
  for (const f of decl.args) {
    const why = checkName(f.text);
    if (why) issues.add(decl.line, f.col, `invalid ${what} name "${f.text}"`, why);
    const first = seen.get(f.text);
    if (first) issues.add(decl.line, f.col, `duplicate ${what} name "${f.text}"`, `first at ${decl.line}:${first.col}`);
    seen.set(f.text, f);
  }
  return decl.args.map((f) => f.text);
}

// ---------------------------------------------------------------------------------------------
// export

/** True when a name can stand as one KISS2 field. */
function isKissWord(name: string): boolean {
  return /^[^\s#]+$/.test(name) && name !== '*';
}

/**
 * Prints a table as KISS2: `.i .o .p .s .r` always, `.ilb`/`.ob` when the names are not the
 * default `in0..`/`out0..` and fit in one field each, then the rows in state order, one line per
 * cube of identical cells. A state without cells gets one line with `*` as its next state, so
 * it keeps its place. KISS2 cannot hold the table name, description, settings or scenarios;
 * state names with whitespace or `#` cannot be written (FlowTableError).
 */
export function tableToKiss2(t: FlowTable): string {
  const n = t.inputs.length;
  const m = t.outputs.length;
  const bad = t.states.findIndex((s) => !isKissWord(s) || (n === 0 && s.startsWith('.')));
  if (bad >= 0)
    throw new FlowTableError([{ where: `states[${bad}]`, message: `state name ${JSON.stringify(t.states[bad])} cannot be written in KISS2`, hint: 'KISS2 state names are single words without whitespace or "#", and not "*"; rename the state' }]);
  const body: string[] = [];
  const field = (cube: string, cur: string, next: string, bits: string) => [...(n ? [cube] : []), cur, next, ...(m ? [bits] : [])].join(' ');
  t.states.forEach((cur, s) => {
    const lines = coverRow(t, s).map((r) => ({ text: field(r.text, cur, t.states[t.next[r.cell]!]!, cellBits(t, r.cell)) }));
    // a state without cells of its own keeps its place in the row order with a `*` line
    if (lines.length === 0) body.push(field('-'.repeat(n), cur, '*', '-'.repeat(m)));
    body.push(...lines.map((l) => l.text));
  });
  const head = [`.i ${n}`, `.o ${m}`];
  const defaultIn = t.inputs.every((s, k) => s === `in${k}`);
  const defaultOut = t.outputs.every((s, k) => s === `out${k}`);
  if (n && !defaultIn && t.inputs.every(isKissWord)) head.push(`.ilb ${t.inputs.join(' ')}`);
  if (m && !defaultOut && t.outputs.every(isKissWord)) head.push(`.ob ${t.outputs.join(' ')}`);
  head.push(`.p ${body.length}`, `.s ${t.states.length}`, `.r ${t.states[t.reset]}`);
  return `${[...head, ...body].join('\n')}\n`;
}
