/** Fixed-size bit sets over state (or candidate) indices, stored as 32-bit words. */

/** A bit set; all sets used together have the same word count. */
export type Bitset = Uint32Array;

/** Number of 32-bit words needed for `size` bits. */
export function countWords(size: number): number {
  return Math.max(1, (size + 31) >>> 5);
}

/** An empty set with room for `size` bits. */
export function createBitset(size: number): Bitset {
  return new Uint32Array(countWords(size));
}

/** A set of the given members. */
export function bitsetFromList(size: number, members: Iterable<number>): Bitset {
  const b = createBitset(size);
  for (const m of members) b[m >>> 5]! |= 1 << (m & 31);
  return b;
}

/** True when `i` is a member. */
export function hasBit(b: Bitset, i: number): boolean {
  return ((b[i >>> 5]! >>> (i & 31)) & 1) === 1;
}

/** Adds `i` in place. */
export function setBit(b: Bitset, i: number): void {
  b[i >>> 5]! |= 1 << (i & 31);
}

/** Removes `i` in place. */
export function clearBit(b: Bitset, i: number): void {
  b[i >>> 5]! &= ~(1 << (i & 31));
}

function popcount32(x: number): number {
  x -= (x >>> 1) & 0x55555555;
  x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
  x = (x + (x >>> 4)) & 0x0f0f0f0f;
  return Math.imul(x, 0x01010101) >>> 24;
}

/** Number of members. */
export function countBits(b: Bitset): number {
  let n = 0;
  for (let w = 0; w < b.length; w++) n += popcount32(b[w]!);
  return n;
}

/** True when the set has no members. */
export function isEmptyBitset(b: Bitset): boolean {
  for (let w = 0; w < b.length; w++) if (b[w] !== 0) return false;
  return true;
}

/** True when every member of `a` is in `b`. */
export function isSubset(a: Bitset, b: Bitset): boolean {
  for (let w = 0; w < a.length; w++) if ((a[w]! & ~b[w]!) !== 0) return false;
  return true;
}

/** True when the sets share a member. */
export function intersects(a: Bitset, b: Bitset): boolean {
  for (let w = 0; w < a.length; w++) if ((a[w]! & b[w]!) !== 0) return true;
  return false;
}

/** `a ∩ b` as a new set. */
export function andBitsets(a: Bitset, b: Bitset): Bitset {
  const r = new Uint32Array(a.length);
  for (let w = 0; w < a.length; w++) r[w] = a[w]! & b[w]!;
  return r;
}

/** `a \ b` as a new set. */
export function andNotBitsets(a: Bitset, b: Bitset): Bitset {
  const r = new Uint32Array(a.length);
  for (let w = 0; w < a.length; w++) r[w] = a[w]! & ~b[w]!;
  return r;
}

/** `a ∪= b` in place. */
export function orInto(a: Bitset, b: Bitset): void {
  for (let w = 0; w < a.length; w++) a[w]! |= b[w]!;
}

/** Members in ascending order. */
export function bitsetToList(b: Bitset): number[] {
  const out: number[] = [];
  for (let w = 0; w < b.length; w++) {
    let x = b[w]!;
    while (x !== 0) {
      const low = x & -x;
      out.push((w << 5) + (31 - Math.clz32(low)));
      x ^= low;
    }
  }
  return out;
}

/** A string that identifies the set's members (for hashing). */
export function bitsetToKey(b: Bitset): string {
  if (b.length === 1) return String(b[0]);
  let s = '';
  for (let w = 0; w < b.length; w++) s += (w ? ',' : '') + b[w]!.toString(36);
  return s;
}

/** True when `b` has a member above `x`. */
function hasMemberAbove(b: Bitset, x: number): boolean {
  const w = x >>> 5;
  const rest = (x & 31) === 31 ? 0 : b[w]! & ~((2 << (x & 31)) - 1);
  if (rest !== 0) return true;
  for (let v = w + 1; v < b.length; v++) if (b[v] !== 0) return true;
  return false;
}

/** Orders sets by their ascending member lists, lexicographically (a deterministic total order). */
export function compareBitsets(a: Bitset, b: Bitset): number {
  for (let w = 0; w < a.length; w++) {
    const d = a[w]! ^ b[w]!;
    if (d === 0) continue;
    const x = (w << 5) + (31 - Math.clz32(d & -d));
    // the lists agree below x; the one holding x is smaller unless the other one ends there
    const aHas = (a[w]! & (d & -d)) !== 0;
    if (aHas) return hasMemberAbove(b, x) ? -1 : 1;
    return hasMemberAbove(a, x) ? 1 : -1;
  }
  return 0;
}

/** Lexicographic order of ascending index lists (a shorter prefix comes first). */
export function compareLists(a: readonly number[], b: readonly number[]): number {
  const n = Math.min(a.length, b.length);
  for (let i = 0; i < n; i++) if (a[i] !== b[i]) return a[i]! - b[i]!;
  return a.length - b.length;
}
