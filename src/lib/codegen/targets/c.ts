/** The C99 target: context for templates/c and the list of files it renders. */
import type { CompiledMachine, UIntBits } from '../compile';
import { finishText, formatRows, hexLiteral, type TableRow } from '../format';
import type { IdentifierEntry } from '../identifiers';
import type { CodegenOptions } from '../options';
import { renderTemplate, toCComment, TEMPLATES } from '../registry';
import type { CaseVector, StepVector } from '../vectors';
import { commonContext, headerLines, hexDigits, lowMask, type CommonContext } from './common';

/** A name with its C macro, index and (for inputs and outputs) bit mask literal. */
export interface CNameContext extends IdentifierEntry {
  index: number;
  mask: string;
}

/** A formatted vector table. */
export interface CVectorTable {
  count: number;
  rows: string;
}

/** Everything templates/c renders from. */
export interface CContext extends CommonContext {
  p: string;
  P: string;
  files: { h: string; c: string; test: string; replay: string; port: string };
  types: { state: string; inputs: string; outputs: string; code: string };
  states: CNameContext[];
  inputs: CNameContext[];
  outputs: CNameContext[];
  reset: CNameContext;
  inputMask: string;
  outputMask: string;
  valueMask: string;
  outputTop: number;
  codeTop: number;
  inputTop: number;
  layout: { none: boolean; packed: boolean; split: boolean };
  tables: { next: string; out: string; outKeep: string; outValue: string };
  vectors: {
    powerUp: CVectorTable;
    sequences: { index: number; name: string; count: number; rows: string }[];
    faults: CVectorTable;
    doubleChanges: CVectorTable;
  };
}

function cType(bits: UIntBits): string {
  return `uint${bits}_t`;
}

function decimal(v: number): string {
  return `${v}u`;
}

/** Rows of a per-cell table, one row per state with the state's name as a comment. */
function cellRows(m: CompiledMachine, values: number[], show: (v: number) => string): TableRow[] {
  const rows: TableRow[] = [];
  for (let s = 0; s < m.stateCount; s++)
    rows.push({ comment: toCComment(m.states[s]!), values: values.slice(s * m.columnCount, (s + 1) * m.columnCount).map(show) });
  return rows;
}

function stepLiteral(m: CompiledMachine, v: StepVector): string {
  return `{ ${hexLiteral(v.event, hexDigits(m.inputBits), 'u')}, ${hexLiteral(v.inputs, hexDigits(m.inputBits), 'u')}, ${v.state}u, ${hexLiteral(v.outputs, hexDigits(m.outputBits), 'u')}, ${v.fault}u }`;
}

function caseLiteral(m: CompiledMachine, v: CaseVector): string {
  const i = (x: number) => hexLiteral(x, hexDigits(m.inputBits), 'u');
  const o = (x: number) => hexLiteral(x, hexDigits(m.outputBits), 'u');
  return `{ ${v.from.state}u, ${i(v.from.column)}, ${o(v.from.outputs)}, ${i(v.inputs)}, ${v.expect.state}u, ${i(v.expect.column)}, ${o(v.expect.outputs)}, ${v.fault}u }`;
}

function vectorTable(items: string[], perLine: number): CVectorTable {
  return { count: items.length, rows: formatRows([{ values: items }], '    ', perLine, 'c') };
}

/** File names of a C bundle for a prefix. */
export function cFileNames(prefix: string): CContext['files'] {
  return { h: `${prefix}.h`, c: `${prefix}.c`, test: `${prefix}_test.c`, replay: `${prefix}_replay.c`, port: `${prefix}_port.h` };
}

/** Builds the C template context of a compiled machine. */
export function buildCContext(m: CompiledMachine, options: CodegenOptions, sourceHash: string): CContext {
  const ids = m.identifiers;
  const files = cFileNames(ids.prefix);
  const withMask = (entries: IdentifierEntry[], bits: UIntBits): CNameContext[] =>
    entries.map((e, index) => ({ ...e, index, mask: hexLiteral(2 ** index, hexDigits(bits), 'u') }));
  const states = ids.states.map((e, index) => ({ ...e, index, mask: '' }));
  const v = m.vectors;
  const sequences = [...v.tour, ...v.scenarios].map((s, i) => ({
    index: i + 1,
    name: s.name,
    count: s.steps.length,
    rows: formatRows([{ values: s.steps.map((x) => stepLiteral(m, x)) }], '    ', 4, 'c'),
  }));
  const codeDigits = hexDigits(m.outCodeBits);
  return {
    ...commonContext(m, options, sourceHash, files.c),
    p: ids.prefix,
    P: ids.macroPrefix,
    files,
    types: { state: cType(m.stateBits), inputs: cType(m.inputBits), outputs: cType(m.outputBits), code: cType(m.outCodeBits) },
    states,
    inputs: withMask(ids.inputs, m.inputBits),
    outputs: withMask(ids.outputs, m.outputBits),
    reset: states[m.reset]!,
    inputMask: hexLiteral(lowMask(m.inputCount), hexDigits(m.inputBits), 'u'),
    outputMask: hexLiteral(lowMask(m.outputCount), hexDigits(m.outputBits), 'u'),
    valueMask: hexLiteral(lowMask(m.outputCount), 8, 'u'),
    outputTop: m.outputCount - 1,
    codeTop: 2 * m.outputCount - 1,
    inputTop: m.inputCount - 1,
    layout: { none: m.outputLayout === 'none', packed: m.outputLayout === 'packed', split: m.outputLayout === 'split' },
    tables: {
      next: formatRows(cellRows(m, m.next, decimal), '    ', 16, 'c'),
      out: m.outputLayout === 'packed' ? formatRows(cellRows(m, m.outCode, (x) => hexLiteral(x, codeDigits, 'u')), '    ', 12, 'c') : '',
      outKeep: m.outputLayout === 'split' ? formatRows(cellRows(m, m.outKeep, (x) => hexLiteral(x, 8, 'u')), '    ', 8, 'c') : '',
      outValue: m.outputLayout === 'split' ? formatRows(cellRows(m, m.outValue, (x) => hexLiteral(x, 8, 'u')), '    ', 8, 'c') : '',
    },
    vectors: {
      powerUp: vectorTable(v.powerUp.map((x) => stepLiteral(m, x)), 3),
      sequences,
      faults: vectorTable(v.faults.map((x) => caseLiteral(m, x)), 2),
      doubleChanges: vectorTable(v.doubleChanges.map((x) => caseLiteral(m, x)), 2),
    },
  };
}

/** Renders every C file of a bundle (manifest excluded), paths relative to the bundle root. */
export function renderCFiles(m: CompiledMachine, options: CodegenOptions, sourceHash: string): { path: string; content: string }[] {
  const ctx = buildCContext(m, options, sourceHash);
  const paths: Record<(typeof TEMPLATES.c)[number], string> = {
    'c/machine.h': ctx.files.h,
    'c/machine.c': ctx.files.c,
    'c/test.c': ctx.files.test,
    'c/replay.c': ctx.files.replay,
    'c/Makefile': 'Makefile',
    'c/README.md': 'README.md',
  };
  return TEMPLATES.c.map((id) => {
    const path = paths[id];
    const header = headerLines({ file: path, generatorVersion: options.generatorVersion, controller: m.name, revision: options.revision, sourceHash });
    return { path, content: finishText(renderTemplate(id, { ...ctx, header })) };
  });
}
