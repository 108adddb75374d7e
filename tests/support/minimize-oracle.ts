/**
 * Slow, obviously-correct reference computations for the minimization tests: compatibility by
 * repeated sweeps (no worklist), compatibles and prime compatibles by exhaustive enumeration,
 * closed-cover checks and minimum covers by trying every k-subset. Small tables only.
 */
import { countColumns, NONE, type FlowTable } from '../../src/lib/engine/model';

/** compat[i][j]: true when states i and j may share a class (repeated sweeps to the fixpoint). */
export function naiveCompatibility(t: FlowTable): boolean[][] {
  const n = t.states.length;
  const cols = countColumns(t.inputs.length);
  const ok = Array.from({ length: n }, () => new Array<boolean>(n).fill(true));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j++) {
      for (let c = 0; c < cols; c++) {
        const a = i * cols + c;
        const b = j * cols + c;
        if ((t.outCare[a]! & t.outCare[b]! & (t.outValue[a]! ^ t.outValue[b]!)) !== 0) ok[i]![j] = false;
      }
    }
  }
  for (let changed = true; changed; ) {
    changed = false;
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < n; j++) {
        if (!ok[i]![j]) continue;
        for (let c = 0; c < cols; c++) {
          const x = t.next[i * cols + c]!;
          const y = t.next[j * cols + c]!;
          if (x !== NONE && y !== NONE && !ok[x]![y]) {
            ok[i]![j] = false;
            ok[j]![i] = false;
            changed = true;
            break;
          }
        }
      }
    }
  }
  return ok;
}

/** Number of compatible pairs i < j. */
export function countCompatiblePairs(ok: boolean[][]): number {
  let k = 0;
  for (let j = 1; j < ok.length; j++) for (let i = 0; i < j; i++) if (ok[i]![j]) k++;
  return k;
}

/** True when every two members are compatible. */
export function isCompatibleSet(ok: boolean[][], set: readonly number[]): boolean {
  return set.every((a) => set.every((b) => ok[a]![b]));
}

/** Every non-empty compatible, as sorted lists (exhaustive over subsets). */
export function allCompatibles(ok: boolean[][]): number[][] {
  const n = ok.length;
  const out: number[][] = [];
  for (let mask = 1; mask < 1 << n; mask++) {
    const set: number[] = [];
    for (let s = 0; s < n; s++) if ((mask >> s) & 1) set.push(s);
    if (isCompatibleSet(ok, set)) out.push(set);
  }
  return out;
}

/** Implied classes of a set of states: per column, the set of specified next states (two or more). */
export function impliedClasses(t: FlowTable, set: readonly number[]): number[][] {
  const cols = countColumns(t.inputs.length);
  const out: number[][] = [];
  for (let c = 0; c < cols; c++) {
    const nx = [...new Set(set.map((s) => t.next[s * cols + c]!).filter((x) => x !== NONE))].sort((a, b) => a - b);
    if (nx.length >= 2) out.push(nx);
  }
  return out;
}

const within = (a: readonly number[], b: readonly number[]): boolean => a.every((x) => b.includes(x));

/** Class set by the textbook definition: implied classes not contained in the set itself. */
export function classSetOf(t: FlowTable, set: readonly number[]): number[][] {
  return impliedClasses(t, set).filter((d) => !within(d, set));
}

/**
 * Prime compatibles by the definition: C is excluded when a compatible C' ⊋ C exists each of
 * whose class-set members lies inside some class-set member of C.
 */
export function brutePrimes(t: FlowTable, ok: boolean[][]): number[][] {
  const all = allCompatibles(ok);
  const sets = all.map((c) => ({ c, p: classSetOf(t, c) }));
  return sets
    .filter(({ c, p }) => !sets.some((o) => o.c.length > c.length && within(c, o.c) && o.p.every((d) => p.some((e) => within(d, e)))))
    .map(({ c }) => c);
}

/** True when the classes cover every state, are compatibles, and every implied class lies in some class. */
export function isClosedCover(t: FlowTable, ok: boolean[][], classes: readonly (readonly number[])[]): boolean {
  const n = t.states.length;
  for (let s = 0; s < n; s++) if (!classes.some((c) => c.includes(s))) return false;
  if (!classes.every((c) => isCompatibleSet(ok, c))) return false;
  return classes.every((c) => impliedClasses(t, c).every((d) => classes.some((e) => within(d, e))));
}

/** Size of the smallest closed cover drawn from `pool`, trying every k-subset for k = 1, 2, … */
export function bruteMinimumCoverSize(t: FlowTable, ok: boolean[][], pool: readonly number[][]): number {
  const n = t.states.length;
  for (let k = 1; k <= n; k++) {
    const pick: number[][] = [];
    const found = (start: number): boolean => {
      if (pick.length === k) return isClosedCover(t, ok, pick);
      for (let i = start; i < pool.length; i++) {
        pick.push(pool[i]!);
        if (found(i + 1)) return true;
        pick.pop();
      }
      return false;
    };
    if (found(0)) return k;
  }
  return n;
}
