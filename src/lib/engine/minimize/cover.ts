/**
 * Minimum closed covers: choose the fewest compatibles so that every state is in one of them
 * and every implied class of a chosen compatible lies inside a chosen compatible.
 */
import {
  andNotBitsets,
  bitsetFromList,
  bitsetToKey,
  bitsetToList,
  countBits,
  createBitset,
  intersects,
  isSubset,
  orInto,
  setBit,
  clearBit,
  hasBit,
  type Bitset,
} from './bitset';
import { now, type CompatibleClass } from './compatibles';

/** A compatible offered to the cover search, with its class set. */
export interface CoverCandidate {
  states: readonly number[];
  classSet: readonly (readonly number[])[];
}

/** Search budgets; past either one the best cover found so far is returned with `exact: false`. */
export interface CoverOptions {
  /** Most branch-and-bound nodes to visit (default 200 000). */
  nodeBudget?: number;
  /** Most milliseconds to search (default 2 000). */
  timeBudgetMs?: number;
}

/** A closed cover and how it was found. */
export interface CoverResult {
  /** Indices of the chosen candidates, ascending. */
  chosen: number[];
  /** The chosen candidates' states. */
  classes: number[][];
  /** True when the search proved no smaller closed cover exists among the candidates. */
  exact: boolean;
  /** Lower bound proven at the root (pairwise-exclusive requirements). */
  lowerBound: number;
  nodes: number;
  ms: number;
}

/** Default node budget of the exact search. */
export const DEFAULT_NODE_BUDGET = 200_000;
/** Default time budget of the exact search, in milliseconds. */
export const DEFAULT_TIME_BUDGET_MS = 2_000;

/** Candidates with interned implied classes and per-state / per-class candidate sets. */
interface CoverProblem {
  n: number;
  m: number;
  cands: CompatibleClass[];
  /** For each candidate, the ids of its implied classes. */
  candClasses: number[][];
  classStates: Bitset[];
  /** For each class id, the candidates containing it (filled on first use by `classCandidates`). */
  classCands: (Bitset | undefined)[];
  /** For each state, the candidates containing it. */
  stateCands: Bitset[];
  /** For each state, the set holding only it. */
  singletons: Bitset[];
}

/** Something a closed cover must contain: a state, or an implied class of a chosen candidate. */
interface Requirement {
  states: Bitset;
  /** Candidates that contain `states`. */
  cands: Bitset;
}

function buildProblem(n: number, cands: CompatibleClass[]): CoverProblem {
  const m = cands.length;
  const stateCands: Bitset[] = [];
  for (let s = 0; s < n; s++) stateCands.push(createBitset(m));
  cands.forEach((c, i) => {
    for (const s of bitsetToList(c.states)) setBit(stateCands[s]!, i);
  });
  const classIndex = new Map<string, number>();
  const classStates: Bitset[] = [];
  const classCands: (Bitset | undefined)[] = [];
  const candClasses = cands.map((c) =>
    c.classSet.map((d) => {
      const k = bitsetToKey(d);
      let id = classIndex.get(k);
      if (id === undefined) {
        id = classStates.length;
        classIndex.set(k, id);
        classStates.push(d);
        classCands.push(undefined);
      }
      return id;
    }),
  );
  const singletons = Array.from({ length: n }, (_, s) => bitsetFromList(n, [s]));
  return { n, m, cands, candClasses, classStates, classCands, stateCands, singletons };
}

/** Candidates containing class `id`: the intersection of its members' candidate sets. */
function classCandidates(p: CoverProblem, id: number): Bitset {
  let cc = p.classCands[id];
  if (cc) return cc;
  const members = bitsetToList(p.classStates[id]!);
  cc = p.stateCands[members[0]!]!.slice();
  for (let k = 1; k < members.length; k++) {
    const row = p.stateCands[members[k]!]!;
    for (let w = 0; w < cc.length; w++) cc[w]! &= row[w]!;
  }
  p.classCands[id] = cc;
  return cc;
}

/** Requirements still open for a partial cover: uncovered states, then unsatisfied classes. */
function openRequirements(p: CoverProblem, chosen: readonly number[], chosenMask: Bitset, covered: Bitset): Requirement[] {
  const reqs: Requirement[] = [];
  for (let s = 0; s < p.n; s++) if (!hasBit(covered, s)) reqs.push({ states: p.singletons[s]!, cands: p.stateCands[s]! });
  const seen = new Set<number>();
  for (const i of chosen) {
    for (const id of p.candClasses[i]!) {
      if (seen.has(id)) continue;
      seen.add(id);
      const cc = classCandidates(p, id);
      if (!intersects(cc, chosenMask)) reqs.push({ states: p.classStates[id]!, cands: cc });
    }
  }
  return reqs;
}

/**
 * Lower bound on how many more candidates are needed: requirements whose remaining candidate
 * sets are pairwise disjoint each need a different one (greedy packing, fewest candidates first).
 */
function packRequirements(avail: Bitset[], order: number[], m: number): number {
  const used = createBitset(m);
  let lb = 0;
  for (const r of order) {
    if (intersects(avail[r]!, used)) continue;
    lb++;
    orInto(used, avail[r]!);
  }
  return lb;
}

/** True when the chosen candidates cover every state and are closed. */
function isClosedCover(p: CoverProblem, chosen: readonly number[]): boolean {
  const mask = bitsetFromList(p.m, chosen);
  const covered = createBitset(p.n);
  for (const i of chosen) orInto(covered, p.cands[i]!.states);
  return openRequirements(p, chosen, mask, covered).length === 0;
}

/**
 * Greedy closed cover: repeatedly take the open requirement with the fewest candidates and
 * the candidate serving the most open requirements; then drop chosen candidates that became
 * redundant. When some requirement has no candidate at all, returns it as `missing`.
 */
function findGreedyIndices(p: CoverProblem): { chosen: number[] } | { missing: Bitset } {
  const chosen: number[] = [];
  const mask = createBitset(p.m);
  const covered = createBitset(p.n);
  for (;;) {
    const reqs = openRequirements(p, chosen, mask, covered);
    if (reqs.length === 0) break;
    let pick = -1;
    let pickCount = Infinity;
    reqs.forEach((r, k) => {
      const c = countBits(r.cands);
      if (c < pickCount) {
        pickCount = c;
        pick = k;
      }
    });
    if (pickCount === 0) return { missing: reqs[pick]!.states.slice() };
    let best = -1;
    let bestScore = -Infinity;
    for (const i of bitsetToList(reqs[pick]!.cands)) {
      let score = 0;
      for (const r of reqs) if (hasBit(r.cands, i)) score += 2;
      // classes the candidate would add that no chosen candidate (nor itself) already holds
      for (const id of p.candClasses[i]!) {
        const d = p.classStates[id]!;
        if (!chosen.some((j) => isSubset(d, p.cands[j]!.states))) score -= 1;
      }
      score += countBits(p.cands[i]!.states) * 1e-3;
      if (score > bestScore) {
        bestScore = score;
        best = i;
      }
    }
    chosen.push(best);
    setBit(mask, best);
    orInto(covered, p.cands[best]!.states);
  }
  // drop redundant members, smallest first
  const order = chosen.slice().sort((a, b) => countBits(p.cands[a]!.states) - countBits(p.cands[b]!.states) || b - a);
  let kept = chosen.slice();
  for (const i of order) {
    const trial = kept.filter((k) => k !== i);
    if (isClosedCover(p, trial)) kept = trial;
  }
  return { chosen: kept.sort((a, b) => a - b) };
}

/**
 * Heuristic closed cover from a pool of compatibles that may be incomplete: runs the greedy
 * cover, and whenever a requirement has no candidate, adds that class (a compatible, with
 * its class set from `classSetOf`) to the pool and tries again. Undefined when the deadline
 * or the round limit stops it first.
 */
export function searchHeuristicCover(
  n: number,
  pool: CompatibleClass[],
  classSetOf: (states: Bitset) => Bitset[],
  limits: { deadline?: number; rounds?: number } = {},
): CoverResult | undefined {
  const start = now();
  const cands = pool.slice();
  const rounds = limits.rounds ?? 64;
  for (let round = 0; round < rounds; round++) {
    if (limits.deadline !== undefined && now() > limits.deadline) return undefined;
    const p = buildProblem(n, cands);
    const r = findGreedyIndices(p);
    if ('chosen' in r) {
      return { chosen: r.chosen, classes: r.chosen.map((i) => bitsetToList(cands[i]!.states)), exact: false, lowerBound: 0, nodes: 0, ms: now() - start };
    }
    cands.push({ states: r.missing, size: countBits(r.missing), classSet: classSetOf(r.missing) });
  }
  return undefined;
}

/**
 * Exact minimum closed cover by branch and bound over the candidates (normally the prime
 * compatibles, among which a minimum closed cover always exists). Branches on the open
 * requirement with the fewest remaining candidates; siblings exclude earlier choices so no
 * cover is visited twice. Starts from the greedy cover as the bound to beat.
 */
export function searchMinimumCover(n: number, cands: CompatibleClass[], options: CoverOptions = {}): CoverResult {
  const start = now();
  const p = buildProblem(n, cands);
  const nodeBudget = options.nodeBudget ?? DEFAULT_NODE_BUDGET;
  const deadline = start + (options.timeBudgetMs ?? DEFAULT_TIME_BUDGET_MS);
  const g = findGreedyIndices(p);
  const greedy = 'chosen' in g ? g.chosen : undefined;
  let best: number[] | undefined = greedy;
  let bestSize = greedy ? greedy.length : Infinity;
  let nodes = 0;
  let aborted = false;
  let rootBound = 0;

  const chosen: number[] = [];
  const chosenMask = createBitset(p.m);
  const forbidden = createBitset(p.m);

  const visit = (covered: Bitset): void => {
    if (aborted) return;
    nodes++;
    if (nodes > nodeBudget || ((nodes & 127) === 0 && now() > deadline)) {
      aborted = true;
      return;
    }
    const reqs = openRequirements(p, chosen, chosenMask, covered);
    if (reqs.length === 0) {
      if (chosen.length < bestSize) {
        bestSize = chosen.length;
        best = chosen.slice().sort((a, b) => a - b);
      }
      return;
    }
    const avail = reqs.map((r) => andNotBitsets(r.cands, forbidden));
    const counts = avail.map(countBits);
    const order = counts.map((_, k) => k).sort((a, b) => counts[a]! - counts[b]! || a - b);
    if (counts[order[0]!] === 0) return;
    const lb = packRequirements(avail, order, p.m);
    if (nodes === 1) rootBound = lb;
    if (chosen.length + lb >= bestSize) return;
    const req = avail[order[0]!]!;
    const branch = bitsetToList(req).sort((a, b) => {
      const ga = countBits(andNotBitsets(p.cands[a]!.states, covered));
      const gb = countBits(andNotBitsets(p.cands[b]!.states, covered));
      return gb - ga || p.candClasses[a]!.length - p.candClasses[b]!.length || a - b;
    });
    const added: number[] = [];
    for (const i of branch) {
      chosen.push(i);
      setBit(chosenMask, i);
      const next = covered.slice();
      orInto(next, p.cands[i]!.states);
      visit(next);
      chosen.pop();
      clearBit(chosenMask, i);
      if (aborted) break;
      setBit(forbidden, i);
      added.push(i);
    }
    for (const i of added) clearBit(forbidden, i);
  };
  visit(createBitset(p.n));

  const chosenFinal = best ?? [];
  return {
    chosen: chosenFinal,
    classes: chosenFinal.map((i) => bitsetToList(p.cands[i]!.states)),
    exact: !aborted && best !== undefined,
    lowerBound: rootBound,
    nodes,
    ms: now() - start,
  };
}

/** Greedy closed cover from the candidates (no optimality claim); undefined when none exists among them. */
export function findGreedyCover(stateCount: number, candidates: readonly CoverCandidate[]): number[][] | undefined {
  const p = buildProblem(stateCount, toClasses(stateCount, candidates));
  const r = findGreedyIndices(p);
  return 'chosen' in r ? r.chosen.map((i) => bitsetToList(p.cands[i]!.states)) : undefined;
}

function toClasses(n: number, candidates: readonly CoverCandidate[]): CompatibleClass[] {
  return candidates.map((c) => ({ states: bitsetFromList(n, c.states), size: c.states.length, classSet: c.classSet.map((d) => bitsetFromList(n, d)) }));
}

/** Minimum closed cover drawn from `candidates` (normally the prime compatibles), within the budgets. */
export function findMinimumCover(stateCount: number, candidates: readonly CoverCandidate[], options: CoverOptions = {}): CoverResult {
  return searchMinimumCover(stateCount, toClasses(stateCount, candidates), options);
}
