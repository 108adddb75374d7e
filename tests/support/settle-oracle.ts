/**
 * Slow, obviously-correct reference of `settleCells` for the engine tests: every cell is settled on
 * its own with plain `settle()` (no memo, no shared walk), and each output summary is read off the
 * list of cells on that settle path by its documented meaning (the `SettledCells` comment in
 * settle.ts), one output at a time.
 */
import { countColumns, type FlowTable } from '../../src/lib/engine/model';
import { settle, SETTLE_OK, SETTLE_OSCILLATION, SETTLE_UNSPECIFIED, type SettledCells } from '../../src/lib/engine/settle';

/** Output `o` of `cell`: 0 or 1 where the cell specifies it, null for a don't-care. */
function readOutput(t: FlowTable, cell: number, o: number): 0 | 1 | null {
  if (((t.outCare[cell]! >>> o) & 1) === 0) return null;
  return ((t.outValue[cell]! >>> o) & 1) as 0 | 1;
}

/** The first specified value of output `o` among `cells[from..]`, or null when all leave it open. */
function findFirstValue(t: FlowTable, cells: number[], from: number, o: number): 0 | 1 | null {
  for (let i = from; i < cells.length; i++) {
    const v = readOutput(t, cells[i]!, o);
    if (v !== null) return v;
  }
  return null;
}

/** Settles every cell and summarizes each settle path naively; same shape as `settleCells`. */
export function naiveSettleCells(t: FlowTable): SettledCells {
  const cols = countColumns(t.inputs.length);
  const size = t.states.length * cols;
  const m = t.outputs.length;
  const summaries = m > 0 ? size : 0;
  const out: SettledCells = {
    columns: cols,
    term: new Int32Array(size),
    fault: new Uint8Array(size),
    state: new Int16Array(size),
    firstCare: new Uint32Array(summaries),
    firstValue: new Uint32Array(summaries),
    once: new Uint32Array(summaries),
    twice: new Uint32Array(summaries),
    risk: new Uint32Array(summaries),
  };
  for (let s = 0; s < t.states.length; s++) {
    for (let c = 0; c < cols; c++) {
      const cell = s * cols + c;
      const r = settle(t, s, c);
      if (r.kind === 'oscillation') {
        out.fault[cell] = SETTLE_OSCILLATION;
        out.state[cell] = -1;
        out.term[cell] = Math.min(...r.cycle) * cols + c;
        continue;
      }
      if (r.kind === 'unspecified') {
        out.fault[cell] = SETTLE_UNSPECIFIED;
        out.state[cell] = -1;
        out.term[cell] = r.state * cols + c;
        continue;
      }
      out.fault[cell] = SETTLE_OK;
      out.state[cell] = r.state;
      out.term[cell] = r.state * cols + c;
      // summaries are only documented for settled cells; elsewhere they stay 0
      if (m === 0) continue;
      const path = r.path.map((p) => p * cols + c);
      // `settle` lists the stable end last; every cell before it is transient
      const last = path.length - 1;
      let firstCare = 0;
      let firstValue = 0;
      let once = 0;
      let twice = 0;
      let risk = 0;
      for (let o = 0; o < m; o++) {
        const bit = 2 ** o;
        const specified = path.map((x) => readOutput(t, x, o)).filter((v) => v !== null);
        if (specified.length > 0) {
          firstCare += bit;
          // the first value; like outValue, 0 where nothing on the path specifies the output
          if (specified[0] === 1) firstValue += bit;
        }
        let changes = 0;
        for (let i = 1; i < specified.length; i++) if (specified[i] !== specified[i - 1]) changes++;
        if (changes >= 1) once += bit;
        if (changes >= 2) twice += bit;
        // a transient don't-care strictly after the start, heading to a value, entered from a cell
        // that leaves the output open too or holds the value it heads to (computeEntryRisk's rule
        // with the previous path cell as the cell before)
        let risky = false;
        for (let i = 1; i < last; i++) {
          if (readOutput(t, path[i]!, o) !== null) continue;
          const heading = findFirstValue(t, path, i, o);
          if (heading === null) continue;
          const before = readOutput(t, path[i - 1]!, o);
          if (before === null || before === heading) risky = true;
        }
        if (risky) risk += bit;
      }
      out.firstCare[cell] = firstCare;
      out.firstValue[cell] = firstValue;
      out.once[cell] = once;
      out.twice[cell] = twice;
      out.risk[cell] = risk;
    }
  }
  return out;
}

/** Every field of `got` that differs from `want` on a cell, as readable lines (summaries on settled cells only). */
export function listSettleMismatches(t: FlowTable, got: SettledCells, want: SettledCells): string[] {
  const lines: string[] = [];
  const cols = want.columns;
  if (got.columns !== cols) lines.push(`columns ${got.columns}, want ${cols}`);
  const summaryFields = ['firstCare', 'firstValue', 'once', 'twice', 'risk'] as const;
  for (const f of summaryFields) if (got[f].length !== want[f].length) lines.push(`${f} has length ${got[f].length}, want ${want[f].length}`);
  if (lines.length > 0) return lines;
  const at = (cell: number) => `(${t.states[Math.floor(cell / cols)]}, column ${cell % cols})`;
  for (let cell = 0; cell < want.term.length; cell++) {
    for (const f of ['fault', 'state', 'term'] as const) if (got[f][cell] !== want[f][cell]) lines.push(`${f} ${at(cell)}: ${got[f][cell]}, want ${want[f][cell]}`);
    if (want.fault[cell] !== SETTLE_OK || want.firstCare.length === 0) continue;
    for (const f of summaryFields) {
      if (got[f][cell] !== want[f][cell]) lines.push(`${f} ${at(cell)}: ${got[f][cell]!.toString(2)}, want ${want[f][cell]!.toString(2)}`);
    }
  }
  return lines;
}
