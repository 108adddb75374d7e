/** One printed row of `npm run bench`. */
export interface BenchRow {
  group: string;
  case: string;
  value: string;
  target?: string;
  ok?: boolean;
}

/** Median of a list of numbers. */
export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

/** Median wall time in ms of `runs` calls after `warmup` unmeasured ones. */
export function timeMedian(fn: () => unknown, runs = 5, warmup = 1): number {
  for (let i = 0; i < warmup; i++) fn();
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    fn();
    times.push(performance.now() - t0);
  }
  return median(times);
}
