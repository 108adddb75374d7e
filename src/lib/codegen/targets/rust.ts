/** The Rust target: context for templates/rust and the list of files it renders. */
import type { CompiledMachine, UIntBits } from '../compile';
import { finishText, formatRows, hexLiteral, type TableRow } from '../format';
import type { IdentifierEntry } from '../identifiers';
import type { CodegenOptions } from '../options';
import { renderTemplate, TEMPLATES } from '../registry';
import type { CaseVector, StepVector } from '../vectors';
import { commonContext, headerLines, hexDigits, lowMask, type CommonContext } from './common';

/** A name with its Rust identifier, index and (for inputs and outputs) bit mask literal. */
export interface RustNameContext extends IdentifierEntry {
  index: number;
  mask: string;
}

/** A formatted vector table. */
export interface RustVectorTable {
  count: number;
  rows: string;
}

/** Everything templates/rust renders from. */
export interface RustContext extends CommonContext {
  crate: string;
  crateVersion: string;
  crateDescription: string;
  types: { state: string; inputs: string; outputs: string; code: string };
  states: RustNameContext[];
  inputs: RustNameContext[];
  outputs: RustNameContext[];
  reset: RustNameContext;
  inputMask: string;
  outputMask: string;
  layout: { none: boolean; packed: boolean; split: boolean };
  /** Keep and value masks from a packed output entry `code`. */
  outExpr: { keep: string; value: string };
  /** The `use` list of examples/replay.rs, braces included. */
  replayImports: string;
  tables: { next: string; out: string; outKeep: string; outValue: string };
  vectors: {
    powerUp: RustVectorTable;
    sequences: { index: number; name: string; count: number; rows: string }[];
    faults: RustVectorTable;
    doubleChanges: RustVectorTable;
  };
}

function rustType(bits: UIntBits): string {
  return `u${bits}`;
}

/** Crate version for a revision label: `rN` becomes `0.N.0`, anything else `0.0.0`. */
export function revisionToCrateVersion(revision: string): string {
  const m = /^r([1-9][0-9]{0,8})$/.exec(revision);
  return m ? `0.${m[1]}.0` : '0.0.0';
}

function cellRows(m: CompiledMachine, values: number[], show: (v: number) => string): TableRow[] {
  const rows: TableRow[] = [];
  for (let s = 0; s < m.stateCount; s++)
    rows.push({ comment: m.states[s]!, values: values.slice(s * m.columnCount, (s + 1) * m.columnCount).map(show) });
  return rows;
}

function stepLiteral(m: CompiledMachine, v: StepVector): string {
  return `(${hexLiteral(v.event, hexDigits(m.inputBits))}, ${hexLiteral(v.inputs, hexDigits(m.inputBits))}, ${v.state}, ${hexLiteral(v.outputs, hexDigits(m.outputBits))}, ${v.fault})`;
}

function caseLiteral(m: CompiledMachine, v: CaseVector): string {
  const i = (x: number) => hexLiteral(x, hexDigits(m.inputBits));
  const o = (x: number) => hexLiteral(x, hexDigits(m.outputBits));
  return `(${v.from.state}, ${i(v.from.column)}, ${o(v.from.outputs)}, ${i(v.inputs)}, ${v.expect.state}, ${i(v.expect.column)}, ${o(v.expect.outputs)}, ${v.fault})`;
}

/** Builds the Rust template context of a compiled machine. */
export function buildRustContext(m: CompiledMachine, options: CodegenOptions, sourceHash: string): RustContext {
  const ids = m.identifiers;
  const withMask = (entries: IdentifierEntry[], bits: UIntBits): RustNameContext[] =>
    entries.map((e, index) => ({ ...e, index, mask: hexLiteral(2 ** index, hexDigits(bits)) }));
  const states = ids.states.map((e, index) => ({ ...e, index, mask: '' }));
  const v = m.vectors;
  const sequences = [...v.tour, ...v.scenarios].map((s, i) => ({
    index: i + 1,
    name: s.name,
    count: s.steps.length,
    rows: formatRows([{ values: s.steps.map((x) => stepLiteral(m, x)) }], '        ', 4, 'rust'),
  }));
  const outputs = rustType(m.outputBits);
  const codeWider = m.outCodeBits !== m.outputBits;
  const outExpr = {
    keep: codeWider ? `(code >> OUTPUT_COUNT) as ${outputs}` : 'code >> OUTPUT_COUNT',
    value: codeWider ? `(code as ${outputs}) & OUTPUT_MASK` : 'code & OUTPUT_MASK',
  };
  const codeDigits = hexDigits(m.outCodeBits);
  const rows = (items: string[], perLine: number) => ({ count: items.length, rows: formatRows([{ values: items }], '        ', perLine, 'rust') });
  return {
    ...commonContext(m, options, sourceHash, 'src/lib.rs'),
    crate: ids.crate,
    crateVersion: revisionToCrateVersion(options.revision),
    crateDescription: `Interrupt-driven handler for the flow table ${JSON.stringify(m.name)} (Quiesce revision ${options.revision})`,
    types: { state: rustType(m.stateBits), inputs: rustType(m.inputBits), outputs, code: rustType(m.outCodeBits) },
    states,
    inputs: withMask(ids.inputs, m.inputBits),
    outputs: withMask(ids.outputs, m.outputBits),
    reset: states[m.reset]!,
    inputMask: hexLiteral(lowMask(m.inputCount), hexDigits(m.inputBits)),
    outputMask: hexLiteral(lowMask(m.outputCount), hexDigits(m.outputBits)),
    layout: { none: m.outputLayout === 'none', packed: m.outputLayout === 'packed', split: m.outputLayout === 'split' },
    outExpr,
    replayImports: m.outputCount > 0 ? '{Machine, INPUT_COUNT, OUTPUT_COUNT}' : '{Machine, INPUT_COUNT}',
    tables: {
      next: formatRows(cellRows(m, m.next, String), '    ', 16, 'rust'),
      out: m.outputLayout === 'packed' ? formatRows(cellRows(m, m.outCode, (x) => hexLiteral(x, codeDigits)), '    ', 12, 'rust') : '',
      outKeep: m.outputLayout === 'split' ? formatRows(cellRows(m, m.outKeep, (x) => hexLiteral(x, 8)), '    ', 8, 'rust') : '',
      outValue: m.outputLayout === 'split' ? formatRows(cellRows(m, m.outValue, (x) => hexLiteral(x, 8)), '    ', 8, 'rust') : '',
    },
    vectors: {
      powerUp: rows(v.powerUp.map((x) => stepLiteral(m, x)), 4),
      sequences,
      faults: rows(v.faults.map((x) => caseLiteral(m, x)), 2),
      doubleChanges: rows(v.doubleChanges.map((x) => caseLiteral(m, x)), 2),
    },
  };
}

/** Renders every Rust file of a bundle (manifest excluded), paths relative to the crate root. */
export function renderRustFiles(m: CompiledMachine, options: CodegenOptions, sourceHash: string): { path: string; content: string }[] {
  const ctx = buildRustContext(m, options, sourceHash);
  const paths: Record<(typeof TEMPLATES.rust)[number], string> = {
    'rust/Cargo.toml': 'Cargo.toml',
    'rust/lib.rs': 'src/lib.rs',
    'rust/replay.rs': 'examples/replay.rs',
    'rust/README.md': 'README.md',
  };
  return TEMPLATES.rust.map((id) => {
    const path = paths[id];
    const header = headerLines({ file: path, generatorVersion: options.generatorVersion, controller: m.name, revision: options.revision, sourceHash });
    return { path, content: finishText(renderTemplate(id, { ...ctx, header })) };
  });
}
