/**
 * FlowTable to CompiledMachine: everything the templates need, resolved at generation time.
 *
 * Encoding (why it looks like this): the run time does one lookup per single-input change, so the
 * next-state table is *settled*: entry `state << inputs | column` is the final stable state of
 * that column, never an intermediate one. Settling failures are encoded in the same table as two
 * reserved codes just past the last state (`states` = unspecified cell reached, `states + 1` =
 * oscillation), so a fault costs one comparison and the fault reason is `code - states + 1`.
 * The output table is indexed like the next-state table and holds the outputs of the stable cell
 * each cell settles in, so a single-input change reads both with one index. An entry is a *keep*
 * mask (the outputs the stable cell leaves open, which hold their previous value) and the values
 * of the others: `outputs = (outputs & keep) | value`, packed into one word
 * (`value | keep << outputs`) when that fits in 32 bits, else two arrays.
 */
import { countColumns, type DoubleChangePolicy, type FlowTable, FlowTableError } from '../engine/model';
import { computeReach } from '../engine/reachability';
import { SETTLE_OK, SETTLE_OSCILLATION } from '../engine/settle';
import { buildIdentifiers, nameToPrefix, type IdentifierMap } from './identifiers';
import { buildVectors, type TestVectors } from './vectors';

/** Widths of the unsigned types the generated code uses. */
export type UIntBits = 8 | 16 | 32;

/** How output masks are stored: none (no outputs), one packed word per cell, or care and value arrays. */
export type OutputLayout = 'none' | 'packed' | 'split';

/** A table compiled for firmware. Arrays are indexed `state << inputCount | column`. */
export interface CompiledMachine {
  name: string;
  description?: string;
  policy: DoubleChangePolicy;
  stateCount: number;
  inputCount: number;
  outputCount: number;
  columnCount: number;
  reset: number;
  /** Original names, in declaration order. */
  states: string[];
  inputs: string[];
  outputs: string[];
  /** Width of the state codes (states plus the two fault codes). */
  stateBits: UIntBits;
  /** Width of an input snapshot. */
  inputBits: UIntBits;
  /** Width of the output mask. */
  outputBits: UIntBits;
  /** Width of one packed output entry (when `outputLayout` is 'packed'). */
  outCodeBits: UIntBits;
  outputLayout: OutputLayout;
  /** Reserved next-state codes. */
  faultCodes: { unspecified: number; oscillation: number };
  /** Settled next state, or a fault code, per cell. */
  next: number[];
  /** Packed `value | keep << outputCount` per cell ('packed'), from the stable cell it settles in; 0 where settling fails (never read). */
  outCode: number[];
  /** Keep and value masks per cell ('split'), likewise. */
  outKeep: number[];
  outValue: number[];
  identifiers: IdentifierMap;
  vectors: TestVectors;
}

/** Options of `compileMachine`. */
export interface CompileOptions {
  /** C prefix and Rust crate name; defaults to `settings.prefix`, else the sanitized table name. */
  prefix?: string;
}

/** Smallest unsigned width holding `maxValue`. */
export function bitsFor(maxValue: number): UIntBits {
  if (maxValue <= 0xff) return 8;
  if (maxValue <= 0xffff) return 16;
  return 32;
}

/** Smallest unsigned width holding a mask of `bitCount` bits (at least 8). */
export function bitsForMask(bitCount: number): UIntBits {
  return bitCount <= 8 ? 8 : bitCount <= 16 ? 16 : 32;
}

/** Integer widths and output layout the generated code uses for a table of this shape. */
export function chooseEncoding(stateCount: number, inputCount: number, outputCount: number): Pick<CompiledMachine, 'stateBits' | 'inputBits' | 'outputBits' | 'outCodeBits' | 'outputLayout'> {
  return {
    // two codes past the last state mark unspecified and oscillating cells
    stateBits: bitsFor(stateCount + 1),
    inputBits: bitsForMask(inputCount),
    outputBits: bitsForMask(outputCount),
    outCodeBits: bitsForMask(2 * outputCount),
    outputLayout: outputCount === 0 ? 'none' : 2 * outputCount <= 32 ? 'packed' : 'split',
  };
}

/** Compiles a table: encodings, settled tables, identifiers and test vectors. */
export function compileMachine(t: FlowTable, options: CompileOptions = {}): CompiledMachine {
  const n = t.inputs.length;
  if (n === 0)
    throw new FlowTableError([{ where: 'inputs', message: 'firmware needs at least one input', hint: 'add the input pins the handler reads' }]);
  const cols = countColumns(n);
  const sCount = t.states.length;
  const m = t.outputs.length;
  const reach = computeReach(t);
  const { term, fault } = reach.cells;
  const size = sCount * cols;
  const codes = { unspecified: sCount, oscillation: sCount + 1 };
  const next: number[] = new Array<number>(size);
  for (let i = 0; i < size; i++) {
    const f = fault[i]!;
    next[i] = f === SETTLE_OK ? (term[i]! / cols) | 0 : f === SETTLE_OSCILLATION ? codes.oscillation : codes.unspecified;
  }
  const encoding = chooseEncoding(sCount, n, m);
  const layout = encoding.outputLayout;
  const outCode: number[] = [];
  const outKeep: number[] = [];
  const outValue: number[] = [];
  if (layout !== 'none') {
    const all = m === 32 ? 0xffffffff : (1 << m) - 1;
    for (let i = 0; i < size; i++) {
      const ok = fault[i] === SETTLE_OK;
      const end = term[i]!;
      const care = ok ? t.outCare[end]! : 0;
      const keep = ok ? (~care & all) >>> 0 : 0;
      const value = ok ? (t.outValue[end]! & care) >>> 0 : 0;
      if (layout === 'packed') outCode.push((value | (keep << m)) >>> 0);
      else {
        outKeep.push(keep);
        outValue.push(value);
      }
    }
  }
  const prefix = options.prefix ?? t.settings.prefix ?? nameToPrefix(t.name);
  return {
    name: t.name,
    ...(t.description !== undefined ? { description: t.description } : {}),
    policy: t.settings.doubleChange,
    stateCount: sCount,
    inputCount: n,
    outputCount: m,
    columnCount: cols,
    reset: t.reset,
    states: [...t.states],
    inputs: [...t.inputs],
    outputs: [...t.outputs],
    ...encoding,
    faultCodes: codes,
    next,
    outCode,
    outKeep,
    outValue,
    identifiers: buildIdentifiers(t, prefix),
    vectors: buildVectors(t, reach),
  };
}
