/** The Rust target: its literal syntax, the Rust-only context fields, and the files it renders. */
import type { CompiledMachine } from '../compile';
import type { CodegenOptions } from '../options';
import { TEMPLATES, toCommentLine } from '../registry';
import { collectHeaderFacts, commonContext, renderTargetFiles, type CommonContext, type TargetSyntax } from './common';

/** Everything templates/rust renders from. */
export interface RustContext extends CommonContext {
  crate: string;
  crateVersion: string;
  crateDescription: string;
  /** Keep and value masks from a packed output entry `code`. */
  outExpr: { keep: string; value: string };
  /** The `use` list of examples/replay.rs, braces included. */
  replayImports: string;
}

/** Rust types and literals: `uN`, unsuffixed numbers, tuples, line comments; vectors sit inside a function. */
export const RUST_SYNTAX: TargetSyntax = {
  typeName: (bits) => `u${bits}`,
  suffix: '',
  tuple: (fields) => `(${fields.join(', ')})`,
  commentStyle: 'rust',
  rowComment: toCommentLine,
  vectorIndent: '        ',
  powerUpPerLine: 4,
};

/** Crate version for a revision label: `rN` becomes `0.N.0`, anything else `0.0.0`. */
export function revisionToCrateVersion(revision: string): string {
  const m = /^r([1-9][0-9]{0,8})$/.exec(revision);
  return m ? `0.${m[1]}.0` : '0.0.0';
}

/** Builds the Rust template context of a compiled machine. */
export function buildRustContext(m: CompiledMachine, options: CodegenOptions, sourceHash: string): RustContext {
  const common = commonContext(m, options, sourceHash, 'src/lib.rs', RUST_SYNTAX);
  const outputs = common.types.outputs;
  const codeWider = m.outCodeBits !== m.outputBits;
  return {
    ...common,
    crate: m.identifiers.crate,
    crateVersion: revisionToCrateVersion(options.revision),
    crateDescription: `Interrupt-driven handler for the flow table ${JSON.stringify(m.name)} (Quiesce revision ${options.revision})`,
    outExpr: {
      keep: codeWider ? `(code >> OUTPUT_COUNT) as ${outputs}` : 'code >> OUTPUT_COUNT',
      value: codeWider ? `(code as ${outputs}) & OUTPUT_MASK` : 'code & OUTPUT_MASK',
    },
    replayImports: m.outputCount > 0 ? '{Machine, INPUT_COUNT, OUTPUT_COUNT}' : '{Machine, INPUT_COUNT}',
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
  return renderTargetFiles(TEMPLATES.rust, paths, ctx, collectHeaderFacts(m, options, sourceHash));
}
