/**
 * Compatibles of an incompletely specified flow table: maximal compatibles (maximal cliques of
 * the compatibility graph), class sets (implied classes) and prime compatibles.
 */
import { countColumns, NONE, type FlowTable } from '../model';
import {
  andBitsets,
  andNotBitsets,
  bitsetFromList,
  bitsetToKey,
  bitsetToList,
  clearBit,
  compareBitsets,
  countBits,
  createBitset,
  isEmptyBitset,
  isSubset,
  setBit,
  type Bitset,
} from './bitset';
import { buildImplicationChart, findDistinctColumns, type ImplicationChart } from './implication-chart';

/** A list of state sets and whether the enumeration ran to the end (false: a limit stopped it). */
export interface CompatibleSets {
  sets: number[][];
  complete: boolean;
}

/** A prime compatible with its class set. */
export interface PrimeCompatible {
  states: number[];
  /** Implied classes not contained in `states`, only the maximal ones, in a fixed order. */
  classSet: number[][];
}

/** Prime compatibles and whether the enumeration ran to the end. */
export interface PrimeCompatibles {
  primes: PrimeCompatible[];
  complete: boolean;
}

/** Limits for enumerations that can grow exponentially. */
export interface EnumerationLimits {
  /** Most sets to produce (maximal compatibles) or examine (prime candidates). */
  limit?: number;
  /** Absolute time (ms, same clock as `now()`) after which to stop. */
  deadline?: number;
}

/** Milliseconds from a monotonic clock where one exists. */
export function now(): number {
  return typeof performance !== 'undefined' ? performance.now() : Date.now();
}

/** Precomputed data for class-set computations over one table. */
export interface CompatibleSpace {
  table: FlowTable;
  stateCount: number;
  columns: number;
  /** One column per group of columns with identical next states. */
  nextColumns: number[];
  scratch: Bitset;
}

/** Prepares a table for class-set computations. */
export function createCompatibleSpace(t: FlowTable): CompatibleSpace {
  return {
    table: t,
    stateCount: t.states.length,
    columns: countColumns(t.inputs.length),
    nextColumns: findDistinctColumns(t, false),
    scratch: createBitset(t.states.length),
  };
}

/** Next-state set of `members` in column `c` (the implied class), written into `out`; returns its size. */
export function fillImpliedClass(space: CompatibleSpace, members: readonly number[], c: number, out: Bitset): number {
  out.fill(0);
  let size = 0;
  const next = space.table.next;
  for (const s of members) {
    const nx = next[s * space.columns + c]!;
    if (nx === NONE) continue;
    const w = nx >>> 5;
    const bit = 1 << (nx & 31);
    if ((out[w]! & bit) === 0) {
      out[w]! |= bit;
      size++;
    }
  }
  return size;
}

/**
 * The class set of a compatible: every implied class with two or more states that is not
 * contained in the compatible itself, keeping only maximal ones, in a fixed order.
 */
export function computeClassSet(space: CompatibleSpace, states: Bitset): Bitset[] {
  const members = bitsetToList(states);
  const found: Bitset[] = [];
  const seen = new Set<string>();
  for (const c of space.nextColumns) {
    const size = fillImpliedClass(space, members, c, space.scratch);
    if (size < 2 || isSubset(space.scratch, states)) continue;
    const k = bitsetToKey(space.scratch);
    if (seen.has(k)) continue;
    seen.add(k);
    found.push(space.scratch.slice());
  }
  return keepMaximalSets(found);
}

/** Drops sets contained in another set of the list; returns the rest in a fixed order. */
export function keepMaximalSets(sets: Bitset[]): Bitset[] {
  const bySize = sets.map((b) => ({ b, n: countBits(b) })).sort((x, y) => y.n - x.n || compareBitsets(x.b, y.b));
  const kept: Bitset[] = [];
  for (const { b } of bySize) if (!kept.some((k) => isSubset(b, k))) kept.push(b);
  return kept.sort(compareBitsets);
}

/** True when every class of `a` is contained in some class of `b` (a's constraints are no stronger). */
export function isClassSetCovered(a: readonly Bitset[], b: readonly Bitset[]): boolean {
  for (const d of a) {
    let ok = false;
    for (const e of b) {
      if (isSubset(d, e)) {
        ok = true;
        break;
      }
    }
    if (!ok) return false;
  }
  return true;
}

/** Class set of a list of states, as sorted state lists (the closure classes of that compatible). */
export function findClassSet(t: FlowTable, states: readonly number[]): number[][] {
  const space = createCompatibleSpace(t);
  return computeClassSet(space, bitsetFromList(t.states.length, states)).map(bitsetToList);
}

/**
 * Maximal compatibles as bit sets: Bron–Kerbosch with Tomita pivoting over the
 * compatibility graph's bit-set rows. Sorted by member list.
 */
export function enumerateMaximalCompatibles(chart: ImplicationChart, limits: EnumerationLimits = {}): { sets: Bitset[]; complete: boolean } {
  const n = chart.stateCount;
  const limit = limits.limit ?? Infinity;
  const out: Bitset[] = [];
  let complete = true;
  let calls = 0;
  const adj = chart.neighbours;
  const expand = (r: Bitset, p: Bitset, x: Bitset): void => {
    if (!complete) return;
    if ((++calls & 1023) === 0 && limits.deadline !== undefined && now() > limits.deadline) {
      complete = false;
      return;
    }
    if (isEmptyBitset(p)) {
      if (isEmptyBitset(x)) {
        if (out.length >= limit) complete = false;
        else out.push(r.slice());
      }
      return;
    }
    // pivot: the vertex of P ∪ X with the most neighbours in P
    let pivot = -1;
    let best = -1;
    for (const src of [p, x]) {
      for (const u of bitsetToList(src)) {
        const k = countBits(andBitsets(p, adj[u]!));
        if (k > best) {
          best = k;
          pivot = u;
        }
      }
    }
    const candidates = bitsetToList(andNotBitsets(p, adj[pivot]!));
    for (const v of candidates) {
      setBit(r, v);
      expand(r, andBitsets(p, adj[v]!), andBitsets(x, adj[v]!));
      clearBit(r, v);
      clearBit(p, v);
      setBit(x, v);
      if (!complete) return;
    }
  };
  const all = createBitset(n);
  for (let s = 0; s < n; s++) setBit(all, s);
  expand(createBitset(n), all, createBitset(n));
  out.sort(compareBitsets);
  return { sets: out, complete };
}

/** Maximal compatibles (maximal sets of pairwise compatible states), each sorted, in a fixed order. */
export function findMaximalCompatibles(chart: ImplicationChart, options: EnumerationLimits = {}): CompatibleSets {
  const r = enumerateMaximalCompatibles(chart, options);
  return { sets: r.sets.map(bitsetToList), complete: r.complete };
}

/** A compatible with its class set, in bit-set form. */
export interface CompatibleClass {
  states: Bitset;
  size: number;
  classSet: Bitset[];
}

/**
 * Prime compatibles (Grasselli–Luccio): C is excluded when some compatible C' ⊋ C has a
 * class set each of whose classes lies in a class of C's class set; a minimum closed cover
 * can always be drawn from the non-excluded ones. Candidates are generated level by level
 * from the maximal compatibles by dropping one state at a time; a compatible with an empty
 * class set excludes all its subsets, so those are not expanded. Exclusion is transitive,
 * so checking against the primes already found (all larger) is enough.
 */
export function enumeratePrimeCompatibles(
  space: CompatibleSpace,
  maximal: readonly Bitset[],
  limits: EnumerationLimits = {},
): { primes: CompatibleClass[]; complete: boolean; examined: number } {
  const limit = limits.limit ?? Infinity;
  // a candidate's hint is a prime known to contain it (its parent, or the parent's excluder),
  // the likeliest one to exclude it, so it is tried first
  const levels = new Map<number, Map<string, { b: Bitset; hint: number }>>();
  const maximalKeys = new Set<string>();
  let top = 0;
  const offer = (b: Bitset, size: number, hint: number): void => {
    let level = levels.get(size);
    if (!level) levels.set(size, (level = new Map()));
    const k = bitsetToKey(b);
    if (!level.has(k)) level.set(k, { b, hint });
  };
  for (const m of maximal) {
    const size = countBits(m);
    maximalKeys.add(bitsetToKey(m));
    offer(m, size, -1);
    if (size > top) top = size;
  }
  const primes: CompatibleClass[] = [];
  // membership[s]: bit q set when state s is in primes[q]; ANDing members' rows finds supersets fast
  const n = space.stateCount;
  let capacityWords = 4;
  let membership: Uint32Array[] = Array.from({ length: n }, () => new Uint32Array(capacityWords));
  const addPrime = (c: CompatibleClass): void => {
    const q = primes.length;
    if (q >>> 5 >= capacityWords) {
      capacityWords *= 2;
      membership = membership.map((row) => {
        const grown = new Uint32Array(capacityWords);
        grown.set(row);
        return grown;
      });
    }
    primes.push(c);
    const word = q >>> 5;
    const bit = 1 << (q & 31);
    for (const s of bitsetToList(c.states)) membership[s]![word]! |= bit;
  };
  let examined = 0;
  for (let k = top; k >= 1; k--) {
    const level = levels.get(k);
    if (!level) continue;
    levels.delete(k);
    const candidates = [...level.values()].sort((x, y) => compareBitsets(x.b, y.b));
    // primes found before this level are all larger; primes of this level cannot contain a candidate
    const largerWords = (primes.length + 31) >>> 5;
    for (const { b: cand, hint } of candidates) {
      if (++examined > limit || ((examined & 255) === 0 && limits.deadline !== undefined && now() > limits.deadline)) {
        return { primes: sortClasses(primes), complete: false, examined };
      }
      const classSet = computeClassSet(space, cand);
      const members = bitsetToList(cand);
      let excluded = false;
      let decider = -1;
      if (hint >= 0 && isClassSetCovered(primes[hint]!.classSet, classSet)) {
        excluded = true;
        decider = hint;
      } else if (!maximalKeys.has(bitsetToKey(cand))) {
        for (let w = 0; w < largerWords && !excluded; w++) {
          let x = -1;
          for (const s of members) {
            x &= membership[s]![w]!;
            if (x === 0) break;
          }
          while (x !== 0) {
            const low = x & -x;
            x ^= low;
            const qi = (w << 5) + (31 - Math.clz32(low));
            if (isClassSetCovered(primes[qi]!.classSet, classSet)) {
              excluded = true;
              decider = qi;
              break;
            }
          }
        }
      }
      if (!excluded) {
        decider = primes.length;
        addPrime({ states: cand, size: k, classSet });
      }
      if (classSet.length === 0 || k === 1) continue;
      for (const s of members) {
        const sub = cand.slice();
        clearBit(sub, s);
        offer(sub, k - 1, decider);
      }
    }
  }
  return { primes: sortClasses(primes), complete: true, examined };
}

function sortClasses(list: CompatibleClass[]): CompatibleClass[] {
  return list.sort((a, b) => b.size - a.size || compareBitsets(a.states, b.states));
}

/** Prime compatibles of a table (largest first), each with its class set. */
export function findPrimeCompatibles(
  t: FlowTable,
  options: EnumerationLimits & { chart?: ImplicationChart } = {},
): PrimeCompatibles {
  const chart = options.chart ?? buildImplicationChart(t);
  const maximal = enumerateMaximalCompatibles(chart, options);
  const space = createCompatibleSpace(t);
  const r = enumeratePrimeCompatibles(space, maximal.sets, options);
  return {
    primes: r.primes.map((p) => ({ states: bitsetToList(p.states), classSet: p.classSet.map(bitsetToList) })),
    complete: maximal.complete && r.complete,
  };
}
