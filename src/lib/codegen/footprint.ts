/**
 * Flash footprint of a generated C handler, without generating it: the `const` tables exactly
 * (same encoding as `compileMachine`), and the handler code from a per-policy model measured
 * with arm-none-eabi-size at -Os for Cortex-M0+ (tests/lib/codegen/footprint.test.ts holds the
 * model against the real compiler).
 */
import type { DoubleChangePolicy, FlowTable } from '../engine/model';
import { chooseEncoding, type CompiledMachine } from './compile';

type Encoding = Pick<CompiledMachine, 'stateBits' | 'outCodeBits' | 'outputLayout'>;

/** Bytes of the settled next-state and output tables for `cells` cells of an encoding. */
export function encodedTableBytes(e: Encoding, cells: number): number {
  const out = e.outputLayout === 'packed' ? e.outCodeBits / 8 : e.outputLayout === 'split' ? 8 : 0;
  return cells * (e.stateBits / 8 + out);
}

// .text bytes of the handler (init, event, poll, accessors and the double-change path) by policy,
// with and without outputs; measured on the demo controllers and synthetic 2-, 6- and 20-output
// tables (arm-none-eabi-gcc 12, -mcpu=cortex-m0plus -mthumb -Os). Table size does not change them.
const CODE_BYTES: Record<DoubleChangePolicy, { outputs: number; none: number }> = {
  guarded: { outputs: 280, none: 220 },
  fault: { outputs: 152, none: 116 },
  stepwise: { outputs: 264, none: 196 },
  direct: { outputs: 208, none: 156 },
};

/** The footprint the Build view shows. */
export interface Footprint {
  cells: number;
  stateBytes: number;
  outputEntryBytes: number;
  tableBytes: number;
  codeBytes: number;
  codeBasis: string;
}

/** Estimates the flash use of the C handler for a table under its double-change policy. */
export function estimateFootprint(t: FlowTable): Footprint {
  const cells = t.states.length << t.inputs.length;
  const e = chooseEncoding(t.states.length, t.inputs.length, t.outputs.length);
  const outputEntryBytes = e.outputLayout === 'packed' ? e.outCodeBits / 8 : e.outputLayout === 'split' ? 8 : 0;
  const code = CODE_BYTES[t.settings.doubleChange];
  return {
    cells,
    stateBytes: e.stateBits / 8,
    outputEntryBytes,
    tableBytes: encodedTableBytes(e, cells),
    codeBytes: t.outputs.length ? code.outputs : code.none,
    codeBasis: `Cortex-M0+ at -Os, ${t.settings.doubleChange} double-change policy (measured model)`,
  };
}
