/**
 * Diff of two tables (names, settings, cells) and of two finding lists.
 *
 * Renames are reported only where they can be told apart from a removal plus an addition:
 * - a state is renamed when the old name is gone, the new name is new, both sit at the same
 *   position of `states`, and the row's cells are equal once every such rename is applied to the
 *   next states (so a rename with edits reads as one removed and one added state);
 * - an input or output is renamed when the old name is gone, the new name is new, both sit at the
 *   same position, and both tables have the same number of inputs (outputs).
 * Cells are compared by names: rows by state (renames applied), columns by input names (so
 * reordered inputs still match), output bits by output name. When the two tables do not have the
 * same inputs (after renames), columns cannot be matched and `cellsCompared` is false.
 */
import { cellToText, columnToKey, countColumns, grayKeys, keyToColumn, NONE, type FlowTable } from './model';
import { findingToKey, type Finding } from './findings';
import { analyzeTable } from './analyze';

/** Names added, removed and renamed in one list (states, inputs or outputs). */
export interface NameChanges {
  added: string[];
  removed: string[];
  renamed: { before: string; after: string }[];
}

/** One cell whose text differs; `state` and `inputs` are in the second table's names. */
export interface CellChange {
  state: string;
  inputs: string;
  before: string;
  after: string;
}

/** Findings of the second table against the first. */
export interface FindingsDiff {
  added: Finding[];
  resolved: Finding[];
  unchanged: Finding[];
}

/** Everything that differs between two tables. */
export interface TableDiff {
  same: boolean;
  name?: { before: string; after: string };
  description?: { before: string | null; after: string | null };
  reset?: { before: string; after: string };
  settings: { key: string; before: string | null; after: string | null }[];
  states: NameChanges;
  inputs: NameChanges;
  outputs: NameChanges;
  cellsCompared: boolean;
  cells: CellChange[];
  findings?: FindingsDiff;
}

/** Options of diffTables. */
export interface DiffOptions {
  /** Also analyze both tables and diff their findings (default true). */
  findings?: boolean;
}

function diffNames(a: string[], b: string[], positional: boolean): NameChanges & { map: Map<string, string> } {
  const inB = new Set(b);
  const inA = new Set(a);
  const map = new Map<string, string>();
  const renamed: { before: string; after: string }[] = [];
  if (positional) {
    for (let i = 0; i < Math.min(a.length, b.length); i++) {
      const x = a[i]!;
      const y = b[i]!;
      if (x !== y && !inB.has(x) && !inA.has(y)) {
        map.set(x, y);
        renamed.push({ before: x, after: y });
      }
    }
  }
  const renamedTo = new Set(map.values());
  return {
    added: b.filter((y) => !inA.has(y) && !renamedTo.has(y)),
    removed: a.filter((x) => !inB.has(x) && !map.has(x)),
    renamed,
    map,
  };
}

/** Diffs table `b` against table `a`. */
export function diffTables(a: FlowTable, b: FlowTable, options: DiffOptions = {}): TableDiff {
  const inputs = diffNames(a.inputs, b.inputs, a.inputs.length === b.inputs.length);
  const outputs = diffNames(a.outputs, b.outputs, a.outputs.length === b.outputs.length);
  const inputName = (x: string): string => inputs.map.get(x) ?? x;
  const outputName = (x: string): string => outputs.map.get(x) ?? x;

  // column of a for each column of b, when the input sets agree
  const bIndex = new Map(b.inputs.map((x, i) => [x, i] as const));
  const perm = a.inputs.map((x) => bIndex.get(inputName(x)) ?? -1);
  const cellsCompared = a.inputs.length === b.inputs.length && perm.every((p) => p >= 0);
  const colsA = countColumns(a.inputs.length);
  const colsB = countColumns(b.inputs.length);
  const columnOfA = new Int32Array(cellsCompared ? colsB : 0);
  if (cellsCompared) {
    for (let ca = 0; ca < colsA; ca++) {
      let cb = 0;
      for (let k = 0; k < a.inputs.length; k++) if ((ca >> k) & 1) cb |= 1 << perm[k]!;
      columnOfA[cb] = ca;
    }
  }
  const bOut = new Map(b.outputs.map((x, i) => [x, i] as const));
  const outPairs: [number, number][] = [];
  a.outputs.forEach((x, i) => {
    const j = bOut.get(outputName(x));
    if (j !== undefined) outPairs.push([i, j]);
  });
  const bState = new Map(b.states.map((x, i) => [x, i] as const));

  const cellsEqual = (sa: number, sb: number, cb: number, stateMap: (x: string) => string): boolean => {
    const xa = sa * colsA + columnOfA[cb]!;
    const xb = sb * colsB + cb;
    const na = a.next[xa]!;
    const nb = b.next[xb]!;
    if (na === NONE || nb === NONE) return na === nb;
    if (stateMap(a.states[na]!) !== b.states[nb]) return false;
    for (const [i, j] of outPairs) {
      const careA = (a.outCare[xa]! >>> i) & 1;
      const careB = (b.outCare[xb]! >>> j) & 1;
      if (careA !== careB || (careA && ((a.outValue[xa]! >>> i) & 1) !== ((b.outValue[xb]! >>> j) & 1))) return false;
    }
    return true;
  };

  // states: positional rename candidates, confirmed by equal rows under all candidate renames
  const candidates = diffNames(a.states, b.states, true);
  const candidateName = (x: string): string => candidates.map.get(x) ?? x;
  const stateMap = new Map<string, string>();
  if (cellsCompared) {
    for (const { before, after } of candidates.renamed) {
      const sa = a.states.indexOf(before);
      const sb = bState.get(after)!;
      let equal = true;
      for (let cb = 0; cb < colsB && equal; cb++) equal = cellsEqual(sa, sb, cb, candidateName);
      if (equal) stateMap.set(before, after);
    }
  }
  const renamedTo = new Set(stateMap.values());
  const aStates = new Set(a.states);
  const states: NameChanges = {
    added: b.states.filter((y) => !aStates.has(y) && !renamedTo.has(y)),
    removed: a.states.filter((x) => !bState.has(x) && !stateMap.has(x)),
    renamed: [...stateMap].map(([before, after]) => ({ before, after })),
  };
  const mapState = (x: string): string => stateMap.get(x) ?? x;

  const cells: CellChange[] = [];
  if (cellsCompared) {
    const order = grayKeys(b.inputs.length).map(keyToColumn);
    a.states.forEach((nameA, sa) => {
      const sb = bState.get(mapState(nameA));
      if (sb === undefined) return;
      for (const cb of order) {
        if (cellsEqual(sa, sb, cb, mapState)) continue;
        cells.push({
          state: b.states[sb]!,
          inputs: columnToKey(cb, b.inputs.length),
          before: cellToText(a, sa * colsA + columnOfA[cb]!),
          after: cellToText(b, sb * colsB + cb),
        });
      }
    });
  }

  const settings: TableDiff['settings'] = [];
  const keys = new Set([...Object.keys(a.settings), ...Object.keys(b.settings)]);
  for (const key of [...keys].sort()) {
    const before = (a.settings as Record<string, unknown>)[key];
    const after = (b.settings as Record<string, unknown>)[key];
    if (before !== after) settings.push({ key, before: before === undefined ? null : String(before), after: after === undefined ? null : String(after) });
  }

  const diff: TableDiff = {
    same: false,
    settings,
    states,
    inputs: { added: inputs.added, removed: inputs.removed, renamed: inputs.renamed },
    outputs: { added: outputs.added, removed: outputs.removed, renamed: outputs.renamed },
    cellsCompared,
    cells,
  };
  if (a.name !== b.name) diff.name = { before: a.name, after: b.name };
  if ((a.description ?? null) !== (b.description ?? null)) diff.description = { before: a.description ?? null, after: b.description ?? null };
  if (mapState(a.states[a.reset]!) !== b.states[b.reset]) diff.reset = { before: a.states[a.reset]!, after: b.states[b.reset]! };
  const orderChanged = (x: string[], y: string[], f: (s: string) => string): boolean => x.length === y.length && x.some((s, i) => f(s) !== y[i]);
  diff.same =
    !diff.name &&
    !diff.description &&
    !diff.reset &&
    settings.length === 0 &&
    [states, inputs, outputs].every((c) => c.added.length + c.removed.length + c.renamed.length === 0) &&
    cellsCompared &&
    cells.length === 0 &&
    !orderChanged(a.states, b.states, mapState) &&
    !orderChanged(a.inputs, b.inputs, inputName) &&
    !orderChanged(a.outputs, b.outputs, outputName);
  if (options.findings !== false) diff.findings = diffFindings(analyzeTable(a).findings, analyzeTable(b).findings, Object.fromEntries(stateMap));
  return diff;
}

/**
 * Findings of `fb` against `fa`, matched by code and location keys (`findingToKey`). `renamed`
 * maps old state names to new ones so a renamed state does not read as resolved plus added.
 */
export function diffFindings(fa: Finding[], fb: Finding[], renamed: Record<string, string> = {}): FindingsDiff {
  const rename = (x: string): string => (Object.prototype.hasOwnProperty.call(renamed, x) ? renamed[x]! : x);
  const keyA = (f: Finding): string =>
    findingToKey({
      ...f,
      ...(f.state !== undefined ? { state: rename(f.state) } : {}),
      ...(f.cycle ? { cycle: f.cycle.map(rename).sort() } : {}),
    });
  const keyB = (f: Finding): string => findingToKey(f.cycle ? { ...f, cycle: [...f.cycle].sort() } : f);
  const inA = new Set(fa.map(keyA));
  const inB = new Set(fb.map(keyB));
  return {
    added: fb.filter((f) => !inA.has(keyB(f))),
    resolved: fa.filter((f) => !inB.has(keyA(f))),
    unchanged: fb.filter((f) => inA.has(keyB(f))),
  };
}
