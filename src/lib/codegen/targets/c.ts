/** The C99 target: its literal syntax, the C-only context fields, and the files it renders. */
import type { CompiledMachine } from '../compile';
import { hexLiteral } from '../format';
import type { CodegenOptions } from '../options';
import { toCComment, TEMPLATES } from '../registry';
import { collectHeaderFacts, commonContext, lowMask, renderTargetFiles, type CommonContext, type TargetSyntax } from './common';

/** Everything templates/c renders from. */
export interface CContext extends CommonContext {
  p: string;
  P: string;
  files: { h: string; c: string; test: string; replay: string; port: string };
  valueMask: string;
  outputTop: number;
  codeTop: number;
  inputTop: number;
}

/** C types and literals: `uintN_t`, `u`-suffixed numbers, brace initializers, block comments. */
export const C_SYNTAX: TargetSyntax = {
  typeName: (bits) => `uint${bits}_t`,
  suffix: 'u',
  tuple: (fields) => `{ ${fields.join(', ')} }`,
  commentStyle: 'c',
  rowComment: toCComment,
  vectorIndent: '    ',
  powerUpPerLine: 3,
};

/** File names of a C bundle for a prefix. */
export function cFileNames(prefix: string): CContext['files'] {
  return { h: `${prefix}.h`, c: `${prefix}.c`, test: `${prefix}_test.c`, replay: `${prefix}_replay.c`, port: `${prefix}_port.h` };
}

/** Builds the C template context of a compiled machine. */
export function buildCContext(m: CompiledMachine, options: CodegenOptions, sourceHash: string): CContext {
  const ids = m.identifiers;
  const files = cFileNames(ids.prefix);
  return {
    ...commonContext(m, options, sourceHash, files.c, C_SYNTAX),
    p: ids.prefix,
    P: ids.macroPrefix,
    files,
    valueMask: hexLiteral(lowMask(m.outputCount), 8, 'u'),
    outputTop: m.outputCount - 1,
    codeTop: 2 * m.outputCount - 1,
    inputTop: m.inputCount - 1,
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
  return renderTargetFiles(TEMPLATES.c, paths, ctx, collectHeaderFacts(m, options, sourceHash));
}
