/**
 * State reduction of a flow table: implication chart, compatibles, minimum closed cover,
 * the reduced table (one row per class) and a check that the reduction keeps behaviour.
 */
import { columnToKey, countColumns, LIMITS, NONE, createTable, type FlowTable } from '../model';
import { bitsetFromList, bitsetToList, clearBit, compareLists, countBits, createBitset, isSubset, type Bitset } from './bitset';
import {
  computeClassSet,
  createCompatibleSpace,
  enumerateMaximalCompatibles,
  enumeratePrimeCompatibles,
  fillImpliedClass,
  now,
  type CompatibleSpace,
  type CompatibleClass,
  type PrimeCompatible,
} from './compatibles';
import { DEFAULT_NODE_BUDGET, DEFAULT_TIME_BUDGET_MS, searchHeuristicCover, searchMinimumCover } from './cover';
import { buildImplicationChart, type ImplicationChart } from './implication-chart';
import { findClosedPartition } from './partition';

/** Budgets of a minimization; past them the result is a heuristic closed cover (`exact: false`). */
export interface MinimizeOptions {
  /** Most branch-and-bound nodes (default 200 000). */
  nodeBudget?: number;
  /** Most milliseconds for the whole minimization (default 2 000). */
  timeBudgetMs?: number;
  /** Most maximal compatibles to enumerate (default 20 000). */
  maximalLimit?: number;
  /** Most prime-compatible candidates to examine (default 200 000). */
  primeLimit?: number;
}

/** How the cover was found. */
export type CoverMethod = 'exact' | 'budget' | 'heuristic';

/** Counters of one minimization. */
export interface MinimizeStats {
  /** Branch-and-bound nodes visited (0 when the heuristic alone was used). */
  nodes: number;
  ms: number;
  compatiblePairs: number;
  maximalCompatibles: number;
  primeCompatibles: number;
  /** `exact`: search finished; `budget`: the node or time budget stopped it; `heuristic`: too many compatibles to search. */
  method: CoverMethod;
  /** Proven lower bound on the row count (pairwise incompatible states, or the search's root bound). */
  lowerBound: number;
}

/** Outcome of `minimizeTable`. */
export interface MinimizeResult {
  /** The chosen classes: sorted state indices, ordered by their member lists. */
  classes: number[][];
  /** True when no closed cover with fewer classes exists. */
  exact: boolean;
  /** The reduced table, row k is `classes[k]`. */
  table: FlowTable;
  chart: ImplicationChart;
  /** Maximal compatibles (all of them unless `maximalComplete` is false). */
  maximal: number[][];
  maximalComplete: boolean;
  /** Prime compatibles (when the enumeration finished; otherwise those found). */
  primes: PrimeCompatible[];
  stats: MinimizeStats;
}

/** Minimizes the number of rows: exact minimum closed cover within the budgets, else a heuristic one. */
export function minimizeTable(t: FlowTable, options: MinimizeOptions = {}): MinimizeResult {
  const start = now();
  const budget = options.timeBudgetMs ?? DEFAULT_TIME_BUDGET_MS;
  // phases share the time budget: listing compatibles, then the exact search, then heuristics
  const at = (fraction: number): number => start + fraction * budget;
  const deadline = at(1);
  const n = t.states.length;
  const chart = buildImplicationChart(t);
  const maximal = enumerateMaximalCompatibles(chart, { limit: options.maximalLimit ?? 20_000, deadline: at(0.25) });
  const space = createCompatibleSpace(t);
  const primes = maximal.complete
    ? enumeratePrimeCompatibles(space, maximal.sets, { limit: options.primeLimit ?? 200_000, deadline: at(0.5) })
    : undefined;

  let classes: number[][] | undefined;
  let exact = false;
  let nodes = 0;
  let method: CoverMethod = 'heuristic';
  let lowerBound = countIncompatibleStates(chart);
  if (primes?.complete) {
    const r = searchMinimumCover(n, primes.primes, {
      nodeBudget: options.nodeBudget ?? DEFAULT_NODE_BUDGET,
      timeBudgetMs: Math.max(0, at(0.8) - now()),
    });
    nodes = r.nodes;
    lowerBound = Math.max(lowerBound, r.lowerBound);
    if (r.classes.length > 0) {
      classes = r.classes;
      exact = r.exact;
    }
    method = r.exact ? 'exact' : 'budget';
  }
  if (!exact) {
    const offer = (c: number[][] | undefined): void => {
      if (c && (!classes || c.length < classes.length)) classes = c;
    };
    // the merge heuristic is polynomial and never worse than one row per state
    offer(findClosedPartition(t, chart, { deadline: Math.max(deadline, now() + 0.15 * budget) }));
    // a greedy cover over the compatibles listed so far, when they are few enough to handle quickly
    const listed = maximal.sets.length + (primes?.primes.length ?? 0);
    if (!primes?.complete && maximal.complete && listed <= 50_000 && now() < deadline) {
      const pool = withClassSets(space, maximal.sets);
      if (primes) pool.push(...primes.primes);
      offer(searchHeuristicCover(n, pool, (b) => computeClassSet(space, b), { deadline })?.classes);
    }
  }
  if (!classes) throw new Error('minimizeTable: no cover was built');
  // a heuristic cover that meets the lower bound is a minimum too
  if (classes.length <= lowerBound) exact = true;
  classes = shrinkOverlaps(space, classes, Math.max(deadline, now() + 50));
  classes = classes.map((c) => c.slice().sort((a, b) => a - b)).sort(compareLists);
  const table = buildReducedTable(t, classes);
  return {
    classes,
    exact,
    table,
    chart,
    maximal: maximal.sets.map(bitsetToList),
    maximalComplete: maximal.complete,
    primes: (primes?.primes ?? []).map((p) => ({ states: bitsetToList(p.states), classSet: p.classSet.map(bitsetToList) })),
    stats: {
      nodes,
      ms: now() - start,
      compatiblePairs: chart.compatiblePairs,
      maximalCompatibles: maximal.sets.length,
      primeCompatibles: primes?.primes.length ?? 0,
      method,
      lowerBound,
    },
  };
}

/**
 * Size of a set of pairwise incompatible states (each needs its own row), found greedily,
 * states with the fewest compatible partners first.
 */
export function countIncompatibleStates(chart: ImplicationChart): number {
  const n = chart.stateCount;
  const degree = chart.neighbours.map(countBits);
  const order = Array.from({ length: n }, (_, s) => s).sort((a, b) => degree[a]! - degree[b]! || a - b);
  const picked: number[] = [];
  for (const s of order) if (picked.every((q) => !chart.isCompatible(s, q))) picked.push(s);
  return picked.length;
}

/** True when every implied class of every class lies inside some class. */
function isClosed(space: CompatibleSpace, sets: readonly Bitset[]): boolean {
  const scratch = createBitset(space.stateCount);
  for (const x of sets) {
    const members = bitsetToList(x);
    for (const c of space.nextColumns) {
      if (fillImpliedClass(space, members, c, scratch) < 2) continue;
      if (!sets.some((y) => isSubset(scratch, y))) return false;
    }
  }
  return true;
}

/**
 * A closed cover may hold a state in several classes. Where dropping such a state from a
 * class keeps the cover closed, drop it: the row count stays, and the classes read better.
 */
function shrinkOverlaps(space: CompatibleSpace, classes: number[][], deadline: number): number[][] {
  const n = space.stateCount;
  const sets = classes.map((c) => bitsetFromList(n, c));
  const uses = new Int32Array(n);
  for (const c of classes) for (const st of c) uses[st]!++;
  if (!uses.some((u) => u > 1)) return classes;
  for (let x = 0; x < sets.length; x++) {
    for (const st of bitsetToList(sets[x]!)) {
      if (uses[st]! < 2 || countBits(sets[x]!) < 2 || now() > deadline) continue;
      const before = sets[x]!;
      const after = before.slice();
      clearBit(after, st);
      sets[x] = after;
      if (isClosed(space, sets)) uses[st]!--;
      else sets[x] = before;
    }
  }
  // a class inside another one adds nothing (only possible for heuristic covers)
  const kept = sets.filter((x, i) => !sets.some((y, j) => j !== i && isSubset(x, y) && (countBits(y) > countBits(x) || j < i)));
  return kept.map(bitsetToList);
}

function withClassSets(space: CompatibleSpace, sets: readonly Bitset[]): CompatibleClass[] {
  return sets.map((b) => ({ states: b, size: countBits(b), classSet: computeClassSet(space, b) }));
}

/**
 * Row names of the reduced table: a one-state class keeps its name, a larger one joins its
 * members with "+" (or "first+N" when that is too long); clashes get a "~k" suffix.
 */
export function nameClasses(states: readonly string[], classes: readonly (readonly number[])[]): string[] {
  const used = new Set<string>();
  const max = LIMITS.nameLength;
  return classes.map((cls) => {
    const members = cls.map((s) => states[s]!);
    let base = members.join('+');
    if (base.length > max) {
      const tail = `+${members.length - 1}`;
      base = members[0]!.slice(0, max - tail.length).trimEnd() + tail;
    }
    let name = base;
    for (let k = 2; used.has(name); k++) {
      const suffix = `~${k}`;
      name = base.slice(0, max - suffix.length).trimEnd() + suffix;
    }
    used.add(name);
    return name;
  });
}

/**
 * The reduced table for a closed cover: one row per class; each cell's next state is a class
 * containing the members' next states (the class itself when it does, else one that is stable
 * or settles there in that column, else the first in order) and its outputs merge the members'.
 */
export function buildReducedTable(t: FlowTable, classes: readonly (readonly number[])[]): FlowTable {
  const n = t.states.length;
  const cols = countColumns(t.inputs.length);
  const k = classes.length;
  const reset = classes.findIndex((c) => c.includes(t.reset));
  const r = createTable({
    name: t.name,
    inputs: t.inputs,
    outputs: t.outputs,
    states: nameClasses(t.states, classes),
    reset: reset < 0 ? 0 : reset,
    ...(t.description !== undefined ? { description: t.description } : {}),
    settings: t.settings,
    scenarios: t.scenarios,
  });
  const sets = classes.map((c) => bitsetFromList(n, c));
  const classesOf: number[][] = Array.from({ length: n }, () => []);
  classes.forEach((c, x) => c.forEach((s) => classesOf[s]!.push(x)));
  const implied: number[] = [];
  const targets: number[][] = Array.from({ length: k }, () => []);
  const reverse: number[][] = Array.from({ length: k }, () => []);
  const choice = new Int32Array(k);
  const queue = new Int32Array(k);
  for (let c = 0; c < cols; c++) {
    // candidates for each class: the classes containing its implied set
    for (let x = 0; x < k; x++) {
      implied.length = 0;
      let care = 0;
      let value = 0;
      for (const s of classes[x]!) {
        const cell = s * cols + c;
        const nx = t.next[cell]!;
        if (nx !== NONE && !implied.includes(nx)) implied.push(nx);
        care |= t.outCare[cell]!;
        value |= t.outValue[cell]! & t.outCare[cell]!;
      }
      r.outCare[x * cols + c] = care >>> 0;
      r.outValue[x * cols + c] = value >>> 0;
      const list = targets[x]!;
      list.length = 0;
      if (implied.length === 0) continue;
      for (const y of classesOf[implied[0]!]!) if (implied.every((s) => sets[y]![s >>> 5]! & (1 << (s & 31)))) list.push(y);
    }
    // settle-aware choice: classes stable in this column first, then those whose candidate settles
    choice.fill(-1);
    let tail = 0;
    for (let x = 0; x < k; x++) {
      if (targets[x]!.includes(x)) {
        choice[x] = x;
        queue[tail++] = x;
      }
    }
    for (let x = 0; x < k; x++) reverse[x]!.length = 0;
    for (let x = 0; x < k; x++) for (const y of targets[x]!) reverse[y]!.push(x);
    for (let head = 0; head < tail; head++) {
      const settled = queue[head]!;
      for (const x of reverse[settled]!) {
        if (choice[x] !== -1) continue;
        choice[x] = settled;
        queue[tail++] = x;
      }
    }
    for (let x = 0; x < k; x++) {
      const list = targets[x]!;
      if (list.length === 0) continue;
      r.next[x * cols + c] = choice[x] !== -1 ? choice[x]! : list[0]!;
    }
  }
  return r;
}

/** A place where a reduced table does not keep an original state's specified behaviour. */
export interface ReductionProblem {
  /** Interchange-style place in the reduced table, e.g. `rows["a+c"]["01"]`. */
  where: string;
  message: string;
  state?: string;
  inputs?: string;
}

/**
 * Checks a reduction: the classes cover every state, the reset class holds the reset state,
 * and for every class and member, every specified next state of the member lies in the class's
 * next class and every specified output bit has the same value in the class's cell.
 */
export function verifyReduction(original: FlowTable, reduced: FlowTable, classes: readonly (readonly number[])[]): ReductionProblem[] {
  const problems: ReductionProblem[] = [];
  const cols = countColumns(original.inputs.length);
  if (reduced.inputs.length !== original.inputs.length || reduced.outputs.length !== original.outputs.length) {
    problems.push({ where: '(document)', message: 'the reduced table has different inputs or outputs' });
    return problems;
  }
  if (reduced.states.length !== classes.length) {
    problems.push({ where: 'states', message: `the reduced table has ${reduced.states.length} rows for ${classes.length} classes` });
    return problems;
  }
  const covered = new Uint8Array(original.states.length);
  classes.forEach((c) => c.forEach((s) => (covered[s] = 1)));
  covered.forEach((v, s) => {
    if (!v) problems.push({ where: 'classes', message: `state "${original.states[s]}" is in no class`, state: original.states[s]! });
  });
  if (!classes[reduced.reset]?.includes(original.reset)) {
    problems.push({ where: 'reset', message: `the reset row "${reduced.states[reduced.reset]}" does not hold the reset state "${original.states[original.reset]}"` });
  }
  classes.forEach((cls, x) => {
    const rowName = reduced.states[x]!;
    for (const s of cls) {
      for (let c = 0; c < cols; c++) {
        const inputs = columnToKey(c, original.inputs.length);
        const where = `rows[${JSON.stringify(rowName)}][${JSON.stringify(inputs)}]`;
        const a = s * cols + c;
        const b = x * cols + c;
        const nx = original.next[a]!;
        if (nx !== NONE) {
          const rn = reduced.next[b]!;
          if (rn === NONE) problems.push({ where, message: `unspecified, but "${original.states[s]}" goes to "${original.states[nx]}"`, state: original.states[s]!, inputs });
          else if (!classes[rn]?.includes(nx))
            problems.push({ where, message: `goes to "${reduced.states[rn]}", which does not hold "${original.states[nx]}", the next state of "${original.states[s]}"`, state: original.states[s]!, inputs });
        }
        const care = original.outCare[a]!;
        const lost = (care & ~reduced.outCare[b]!) | (care & (original.outValue[a]! ^ reduced.outValue[b]!));
        if (lost !== 0) {
          const k = 31 - Math.clz32(lost & -lost);
          problems.push({ where, message: `output "${original.outputs[k]}" differs from state "${original.states[s]}"`, state: original.states[s]!, inputs });
        }
      }
    }
  });
  return problems;
}
