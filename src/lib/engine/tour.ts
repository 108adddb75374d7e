/**
 * Tours: input sequences from power-up that exercise every single-input change (SIC) of every
 * reachable stable total state. The generated unit tests replay them against runtime.ts.
 *
 * Walk rules (they follow runtime.ts): an SIC whose settling fails holds the machine, state and
 * column, so the tour continues from the same stable total state; each such fault edge is taken
 * once. The walk is greedy: at a stable total state it takes its uncovered fault edges first (they
 * do not move the machine), then an uncovered edge towards a state that still has uncovered edges,
 * then any uncovered edge; when the current state has none left it moves along a BFS shortest path
 * (settling edges only) to the nearest state that has one. When nothing uncovered is reachable from
 * the current state, a new segment starts from another power-up column (columns in index order).
 */
import { columnToKey, type FlowTable } from './model';
import { computeReach, type Reach } from './reachability';

/** One power-up and the snapshots that follow it (column keys). */
export interface TourSegment {
  powerUp: string;
  steps: string[];
}

/** A tour: segments in order, with how many SIC edges they cover out of the total. */
export interface Tour {
  segments: TourSegment[];
  /** SIC edges exercised (each edge counted once). */
  covers: number;
  /** SIC edges of reachable stable total states (stable total states times inputs). */
  total: number;
}

/** Builds a tour covering every single-input change of every reachable stable total state. */
export function buildTour(t: FlowTable, reach: Reach = computeReach(t)): Tour {
  const n = t.inputs.length;
  const { state: settled, columns: cols } = reach.cells;
  const full = (1 << n) - 1;
  const size = settled.length;
  const done = new Uint16Array(size);
  const total = reach.stableList.length * n;
  let covers = 0;
  const segments: TourSegment[] = [];
  if (total === 0) return { segments, covers, total };
  const keys: string[] = [];
  for (let c = 0; c < cols; c++) keys.push(columnToKey(c, n));

  const remaining = (x: number): boolean => reach.reachStable[x] === 1 && (done[x]! & full) !== full;
  const cover = (x: number, k: number): void => {
    const bit = 1 << k;
    if (!(done[x]! & bit)) {
      done[x] = done[x]! | bit;
      covers++;
    }
  };
  // target stable cell of an SIC, or -1 when settling there fails (the machine holds)
  const targetOf = (x: number, k: number): number => {
    const c = x % cols;
    const e = x - c + (c ^ (1 << k));
    const st = settled[e]!;
    return st < 0 ? -1 : st * cols + (c ^ (1 << k));
  };

  const stamp = new Int32Array(size);
  const prevCell = new Int32Array(size);
  const prevBit = new Int8Array(size);
  const queue = new Int32Array(size);
  let generation = 0;
  /** BFS from `from` over settling SIC edges; returns the nearest cell with uncovered edges, or -1. */
  const nearest = (from: number): number => {
    generation++;
    let head = 0;
    let tail = 0;
    queue[tail++] = from;
    stamp[from] = generation;
    prevCell[from] = -1;
    while (head < tail) {
      const x = queue[head++]!;
      if (remaining(x)) return x;
      for (let k = 0; k < n; k++) {
        const y = targetOf(x, k);
        if (y < 0 || stamp[y] === generation) continue;
        stamp[y] = generation;
        prevCell[y] = x;
        prevBit[y] = k;
        queue[tail++] = y;
      }
    }
    return -1;
  };

  let firstColumn = 0;
  while (covers < total) {
    // the first power-up column from which something uncovered is still reachable
    let c0 = firstColumn;
    for (; c0 < cols; c0++) {
      const ps = reach.powerUp[c0]!;
      if (ps >= 0 && nearest(ps * cols + c0) >= 0) break;
    }
    if (c0 === cols) break;
    // columns before c0 reach nothing uncovered now, and covering only shrinks that set
    firstColumn = c0;
    let cur = reach.powerUp[c0]! * cols + c0;
    const steps: string[] = [];
    for (;;) {
      if (!remaining(cur)) {
        const goal = nearest(cur);
        if (goal < 0) break;
        const hops: number[] = [];
        for (let y = goal; prevCell[y]! >= 0; y = prevCell[y]!) hops.push(y);
        for (let i = hops.length - 1; i >= 0; i--) {
          const y = hops[i]!;
          cover(prevCell[y]!, prevBit[y]!);
          steps.push(keys[y % cols]!);
        }
        cur = goal;
      }
      const open = ~done[cur]! & full;
      let pick = -1;
      let pickTarget = -1;
      let fallback = -1;
      for (let k = 0; k < n && pick < 0; k++) {
        if (!((open >> k) & 1)) continue;
        const y = targetOf(cur, k);
        if (y < 0) {
          pick = k;
          pickTarget = -1;
        } else if (fallback < 0) fallback = k;
      }
      if (pick < 0) {
        for (let k = 0; k < n; k++) {
          if (!((open >> k) & 1)) continue;
          const y = targetOf(cur, k);
          if (y >= 0 && remaining(y)) {
            pick = k;
            pickTarget = y;
            break;
          }
        }
      }
      if (pick < 0) {
        pick = fallback;
        pickTarget = targetOf(cur, pick);
      }
      cover(cur, pick);
      steps.push(keys[(cur % cols) ^ (1 << pick)]!);
      if (pickTarget >= 0) cur = pickTarget;
    }
    segments.push({ powerUp: keys[c0]!, steps });
  }
  return { segments, covers, total };
}
