/**
 * The implication chart of an incompletely specified flow table: for every pair of states,
 * whether they are compatible, and why not, or which pairs their merging implies.
 * Unspecified next states and don't-care outputs are don't-cares.
 */
import { columnToKey, countColumns, NONE, type FlowTable } from '../model';
import { createBitset, setBit, type Bitset } from './bitset';

/** Why a pair of states cannot be merged. */
export type PairReason =
  /** Both cells of column `inputs` specify `output`, with different values. */
  | { kind: 'outputs'; inputs: string; output: string }
  /** Column `inputs` implies the pair `via`, which is incompatible. */
  | { kind: 'implied'; via: [number, number]; inputs: string };

/** A pair implied by merging two states: their next states in column `inputs`. */
export interface ImpliedPair {
  pair: [number, number];
  inputs: string;
}

/** One cell of the triangular chart, states `pair[0] < pair[1]`. */
export interface ChartEntry {
  pair: [number, number];
  compatible: boolean;
  reason?: PairReason;
  /** Implied pairs (empty for pairs whose outputs conflict, which imply nothing useful). */
  implied: ImpliedPair[];
}

/** The chart with its compact storage and a query API. */
export interface ImplicationChart {
  stateCount: number;
  states: readonly string[];
  /** Per pair index (see `pairIndex`): 1 compatible, 0 incompatible. */
  status: Uint8Array;
  /** Number of compatible pairs. */
  compatiblePairs: number;
  /** For each state, the set of other states it is compatible with. */
  neighbours: Bitset[];
  /** True when states i and j (any order) may share a class; a state is compatible with itself. */
  isCompatible(i: number, j: number): boolean;
  /** Why i and j are incompatible; undefined when they are compatible. */
  reasonOf(i: number, j: number): PairReason | undefined;
  /** Pairs implied by merging i and j, each with the first column that implies it. */
  impliedPairsOf(i: number, j: number): ImpliedPair[];
  /** Every pair, row by row (j = 1..n-1, then i = 0..j-1), as the UI draws the triangle. */
  entries(): ChartEntry[];
}

/** Index of the unordered pair {i, j}, i ≠ j, in an array of n(n-1)/2 entries. */
export function pairIndex(i: number, j: number): number {
  const lo = i < j ? i : j;
  const hi = i < j ? j : i;
  return (hi * (hi - 1)) / 2 + lo;
}

const REASON_NONE = 0;
const REASON_OUTPUTS = 1;
const REASON_IMPLIED = 2;

/**
 * Columns that are identical in every cell (next state and outputs) give the same chart
 * entries, so only the first of each group is examined; imported tables with cubes have many.
 */
export function findDistinctColumns(t: FlowTable, withOutputs: boolean): number[] {
  const cols = countColumns(t.inputs.length);
  const n = t.states.length;
  const byHash = new Map<number, number[]>();
  const reps: number[] = [];
  const same = (a: number, b: number): boolean => {
    for (let s = 0; s < n; s++) {
      const ca = s * cols + a;
      const cb = s * cols + b;
      if (t.next[ca] !== t.next[cb]) return false;
      if (withOutputs && (t.outCare[ca] !== t.outCare[cb] || t.outValue[ca] !== t.outValue[cb])) return false;
    }
    return true;
  };
  for (let c = 0; c < cols; c++) {
    let h = 0x811c9dc5;
    for (let s = 0; s < n; s++) {
      const cell = s * cols + c;
      h = Math.imul(h ^ (t.next[cell]! + 1), 0x01000193);
      if (withOutputs) {
        h = Math.imul(h ^ t.outCare[cell]!, 0x01000193);
        h = Math.imul(h ^ t.outValue[cell]!, 0x01000193);
      }
    }
    const group = byHash.get(h);
    if (group?.some((r) => same(r, c))) continue;
    if (group) group.push(c);
    else byHash.set(h, [c]);
    reps.push(c);
  }
  return reps;
}

function lowestBit(x: number): number {
  return 31 - Math.clz32(x & -x);
}

/** Builds the implication chart and iterates it to its fixpoint with a worklist over reverse implications. */
export function buildImplicationChart(t: FlowTable): ImplicationChart {
  const n = t.states.length;
  const cols = countColumns(t.inputs.length);
  const pairCount = (n * (n - 1)) / 2;
  const reps = findDistinctColumns(t, true);
  const status = new Uint8Array(pairCount).fill(1);
  const reasonKind = new Uint8Array(pairCount);
  const reasonColumn = new Int32Array(pairCount);
  const reasonA = new Int32Array(pairCount);
  const reasonB = new Int32Array(pairCount);
  // forward implications in CSR form: implied pair index and implying column
  const impliedStart = new Int32Array(pairCount + 1);
  let impliedPair: Int32Array = new Int32Array(Math.max(16, pairCount));
  let impliedCol: Int32Array = new Int32Array(impliedPair.length);
  let impliedLen = 0;
  const stamp = new Int32Array(pairCount);
  // per state, the columns where it specifies something; a pair only needs the sparser list
  const active: Int32Array[] = [];
  for (let s = 0; s < n; s++) {
    const list: number[] = [];
    for (const c of reps) if (t.next[s * cols + c] !== NONE || t.outCare[s * cols + c] !== 0) list.push(c);
    active.push(Int32Array.from(list));
  }
  const queue = new Int32Array(pairCount);
  let qTail = 0;

  for (let j = 1; j < n; j++) {
    for (let i = 0; i < j; i++) {
      const p = pairIndex(i, j);
      impliedStart[p] = impliedLen;
      const scan = active[i]!.length <= active[j]!.length ? active[i]! : active[j]!;
      let conflict = false;
      for (const c of scan) {
        const a = i * cols + c;
        const b = j * cols + c;
        const diff = t.outCare[a]! & t.outCare[b]! & (t.outValue[a]! ^ t.outValue[b]!);
        if (diff !== 0) {
          status[p] = 0;
          reasonKind[p] = REASON_OUTPUTS;
          reasonColumn[p] = c;
          reasonA[p] = lowestBit(diff);
          queue[qTail++] = p;
          conflict = true;
          break;
        }
      }
      if (conflict) continue;
      for (const c of scan) {
        const na = t.next[i * cols + c]!;
        const nb = t.next[j * cols + c]!;
        if (na === NONE || nb === NONE || na === nb) continue;
        if ((na === i && nb === j) || (na === j && nb === i)) continue;
        const q = pairIndex(na, nb);
        if (stamp[q] === p + 1) continue;
        stamp[q] = p + 1;
        if (impliedLen === impliedPair.length) {
          const grow = (a: Int32Array): Int32Array => {
            const r = new Int32Array(a.length * 2);
            r.set(a);
            return r;
          };
          impliedPair = grow(impliedPair);
          impliedCol = grow(impliedCol);
        }
        impliedPair[impliedLen] = q;
        impliedCol[impliedLen] = c;
        impliedLen++;
      }
    }
  }
  impliedStart[pairCount] = impliedLen;

  // reverse implications: for each pair q, the pairs p whose merging implies q
  const revStart = new Int32Array(pairCount + 1);
  for (let k = 0; k < impliedLen; k++) revStart[impliedPair[k]! + 1]!++;
  for (let q = 0; q < pairCount; q++) revStart[q + 1]! += revStart[q]!;
  const revFrom = new Int32Array(impliedLen);
  const revCol = new Int32Array(impliedLen);
  const fill = revStart.slice(0, pairCount);
  // endpoints of each pair, for decoding pair indices
  const pairLo = new Int32Array(pairCount);
  const pairHi = new Int32Array(pairCount);
  for (let j = 1; j < n; j++) {
    for (let i = 0; i < j; i++) {
      const p = pairIndex(i, j);
      pairLo[p] = i;
      pairHi[p] = j;
      for (let k = impliedStart[p]!; k < impliedStart[p + 1]!; k++) {
        const q = impliedPair[k]!;
        const at = fill[q]!++;
        revFrom[at] = p;
        revCol[at] = impliedCol[k]!;
      }
    }
  }

  // breadth-first, so each recorded reason is a shortest chain back to an output conflict
  for (let head = 0; head < qTail; head++) {
    const q = queue[head]!;
    for (let k = revStart[q]!; k < revStart[q + 1]!; k++) {
      const p = revFrom[k]!;
      if (status[p] === 0) continue;
      status[p] = 0;
      reasonKind[p] = REASON_IMPLIED;
      reasonColumn[p] = revCol[k]!;
      reasonA[p] = pairLo[q]!;
      reasonB[p] = pairHi[q]!;
      queue[qTail++] = p;
    }
  }

  const neighbours: Bitset[] = [];
  for (let s = 0; s < n; s++) neighbours.push(createBitset(n));
  let compatiblePairs = 0;
  for (let p = 0; p < pairCount; p++) {
    if (status[p] !== 1) continue;
    compatiblePairs++;
    setBit(neighbours[pairLo[p]!]!, pairHi[p]!);
    setBit(neighbours[pairHi[p]!]!, pairLo[p]!);
  }

  const key = (c: number): string => columnToKey(c, t.inputs.length);
  const chart: ImplicationChart = {
    stateCount: n,
    states: t.states,
    status,
    compatiblePairs,
    neighbours,
    isCompatible(i, j) {
      return i === j || status[pairIndex(i, j)] === 1;
    },
    reasonOf(i, j) {
      if (i === j) return undefined;
      const p = pairIndex(i, j);
      const kind = reasonKind[p];
      if (kind === REASON_NONE) return undefined;
      if (kind === REASON_OUTPUTS) return { kind: 'outputs', inputs: key(reasonColumn[p]!), output: t.outputs[reasonA[p]!]! };
      return { kind: 'implied', via: [reasonA[p]!, reasonB[p]!], inputs: key(reasonColumn[p]!) };
    },
    impliedPairsOf(i, j) {
      if (i === j) return [];
      const p = pairIndex(i, j);
      const out: ImpliedPair[] = [];
      for (let k = impliedStart[p]!; k < impliedStart[p + 1]!; k++) {
        const q = impliedPair[k]!;
        out.push({ pair: [pairLo[q]!, pairHi[q]!], inputs: key(impliedCol[k]!) });
      }
      return out;
    },
    entries() {
      const out: ChartEntry[] = [];
      for (let j = 1; j < n; j++) {
        for (let i = 0; i < j; i++) {
          const reason = chart.reasonOf(i, j);
          out.push({ pair: [i, j], compatible: reason === undefined, ...(reason ? { reason } : {}), implied: chart.impliedPairsOf(i, j) });
        }
      }
      return out;
    },
  };
  return chart;
}
