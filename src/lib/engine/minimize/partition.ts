/**
 * A fallback that always works in polynomial time: greedily merge blocks of a partition of
 * the states, propagating implied merges, and keep a merge only when every block stays a
 * compatible. Every partition it holds is a closed cover, so it never needs more rows than
 * the original table.
 */
import { countColumns, NONE, type FlowTable } from '../model';
import { now } from './compatibles';
import type { ImplicationChart } from './implication-chart';

/** Budgets of the merge pass: stops (keeping the partition so far) after the deadline. */
export interface PartitionLimits {
  deadline?: number;
}

/**
 * Closed partition by greedy merging, pairs taken in chart order (j ascending, then i).
 * A merge that fails once fails on any coarser partition (forced merges only grow), so
 * one pass over the pairs is enough.
 */
export function findClosedPartition(t: FlowTable, chart: ImplicationChart, limits: PartitionLimits = {}): number[][] {
  const n = t.states.length;
  const cols = countColumns(t.inputs.length);
  const block = Int32Array.from({ length: n }, (_, s) => s);
  let members: number[][] = Array.from({ length: n }, (_, s) => [s]);
  const seen = new Int32Array(n).fill(-1);
  let stamp = 0;

  const rebuild = (): void => {
    members = Array.from({ length: n }, () => []);
    for (let s = 0; s < n; s++) members[block[s]!]!.push(s);
  };

  const tryMerge = (a: number, b: number): boolean => {
    const saved = block.slice();
    const queue: number[] = [a, b];
    while (queue.length) {
      const y = queue.pop()!;
      const x = queue.pop()!;
      const bx = block[x]!;
      const by = block[y]!;
      if (bx === by) continue;
      const mx = members[bx]!;
      const my = members[by]!;
      for (const u of mx) {
        for (const v of my) {
          if (!chart.isCompatible(u, v)) {
            block.set(saved);
            rebuild();
            return false;
          }
        }
      }
      const [keep, drop] = mx.length >= my.length ? [bx, by] : [by, bx];
      for (const v of members[drop]!) {
        block[v] = keep;
        members[keep]!.push(v);
      }
      members[drop] = [];
      // the merged block's next states in each column must end up in one block
      const merged = members[keep]!;
      for (let c = 0; c < cols; c++) {
        stamp++;
        let first = -1;
        for (const s of merged) {
          const nx = t.next[s * cols + c]!;
          if (nx === NONE) continue;
          if (first < 0) first = nx;
          else if (block[nx] !== block[first] && seen[block[nx]!] !== stamp) {
            seen[block[nx]!] = stamp;
            queue.push(first, nx);
          }
        }
      }
    }
    return true;
  };

  outer: for (let j = 1; j < n; j++) {
    for (let i = 0; i < j; i++) {
      if (limits.deadline !== undefined && (i & 63) === 0 && now() > limits.deadline) break outer;
      if (block[i] === block[j] || !chart.isCompatible(i, j)) continue;
      tryMerge(i, j);
    }
  }
  return members.filter((m) => m.length > 0).map((m) => m.sort((a, b) => a - b));
}
