/**
 * Input cubes: a column pattern over `0 1 -` where `-` covers both values of an input.
 * Used by the compact text form and by KISS2 (character k is inputs[k], as in column keys).
 */
import { countColumns, NONE, type FlowTable } from '../model';

/** A cube as bit masks: `free` bit k set means input k is `-`; `bits` holds the fixed values. */
export interface Cube {
  bits: number;
  free: number;
}

/** Cube text (`0 1 -`, character k = input k) to masks; null when a character is not 0, 1 or -. */
export function textToCube(text: string): Cube | null {
  let bits = 0;
  let free = 0;
  for (let k = 0; k < text.length; k++) {
    const ch = text[k];
    if (ch === '1') bits |= 1 << k;
    else if (ch === '-') free |= 1 << k;
    else if (ch !== '0') return null;
  }
  return { bits, free };
}

/** Cube masks to text of `inputCount` characters. */
export function cubeToText(cube: Cube, inputCount: number): string {
  let s = '';
  for (let k = 0; k < inputCount; k++) s += (cube.free >> k) & 1 ? '-' : (cube.bits >> k) & 1 ? '1' : '0';
  return s;
}

/** Calls `visit` for every column the cube covers, in ascending column order. */
export function forEachCubeColumn(cube: Cube, visit: (column: number) => void): void {
  // enumerate subsets of `free` in increasing order, added to the fixed bits
  let sub = 0;
  for (;;) {
    visit(cube.bits | sub);
    if (sub === cube.free) return;
    sub = ((sub | ~cube.free) + 1) & cube.free;
  }
}

function cubeSize(cube: Cube): number {
  let n = 0;
  for (let f = cube.free; f; f &= f - 1) n++;
  return 1 << n;
}

function cubeInside(cube: Cube, member: Uint8Array): boolean {
  let inside = true;
  forEachCubeColumn(cube, (c) => {
    if (!member[c]) inside = false;
  });
  return inside;
}

/**
 * An exact cover of the column set `member` (1 = in the set) by cubes: every cube lies inside
 * the set and every member column is covered. Deterministic: seeds are taken in ascending
 * column order and grown one input at a time (input 0 first) while the cube stays inside;
 * cubes left redundant by later ones are dropped. Sorted largest first, then by cube text.
 */
export function coverColumns(member: Uint8Array, inputCount: number): Cube[] {
  const columns = member.length;
  const covered = new Uint8Array(columns);
  const cubes: Cube[] = [];
  for (let seed = 0; seed < columns; seed++) {
    if (!member[seed] || covered[seed]) continue;
    const cube: Cube = { bits: seed, free: 0 };
    for (let k = 0; k < inputCount; k++) {
      const grown: Cube = { bits: cube.bits & ~(1 << k), free: cube.free | (1 << k) };
      if (cubeInside(grown, member)) {
        cube.bits = grown.bits;
        cube.free = grown.free;
      }
    }
    forEachCubeColumn(cube, (c) => {
      covered[c] = 1;
    });
    cubes.push(cube);
  }
  // drop cubes whose every column is also covered by another cube, smallest first
  const order = cubes.map((_, i) => i).sort((a, b) => cubeSize(cubes[a]!) - cubeSize(cubes[b]!) || a - b);
  const keep = new Array<boolean>(cubes.length).fill(true);
  const count = new Uint16Array(columns);
  for (const cube of cubes) forEachCubeColumn(cube, (c) => void count[c]!++);
  for (const i of order) {
    let redundant = true;
    forEachCubeColumn(cubes[i]!, (c) => {
      if (count[c]! < 2) redundant = false;
    });
    if (redundant) {
      keep[i] = false;
      forEachCubeColumn(cubes[i]!, (c) => void count[c]!--);
    }
  }
  return cubes
    .filter((_, i) => keep[i])
    .map((cube) => ({ cube, size: cubeSize(cube), text: cubeToText(cube, inputCount) }))
    .sort((a, b) => b.size - a.size || (a.text < b.text ? -1 : a.text > b.text ? 1 : 0))
    .map((x) => x.cube);
}

/** One cube of a row's exact cover, with a cell it covers (all its cells are identical). */
export interface RowCube {
  cube: Cube;
  text: string;
  free: number;
  cell: number;
}

/**
 * Exact cube cover of one row: its specified columns grouped by identical cell, each group
 * covered by `coverColumns`, largest cubes first, then by cube text, so printing is canonical.
 */
export function coverRow(t: FlowTable, state: number): RowCube[] {
  const n = t.inputs.length;
  const cols = countColumns(n);
  const groups = new Map<string, number[]>();
  for (let c = 0; c < cols; c++) {
    const at = state * cols + c;
    if (t.next[at] === NONE) continue;
    const key = `${t.next[at]},${t.outCare[at]},${t.outValue[at]}`;
    let g = groups.get(key);
    if (!g) groups.set(key, (g = []));
    g.push(c);
  }
  const member = new Uint8Array(cols);
  const out: RowCube[] = [];
  for (const g of groups.values()) {
    member.fill(0);
    for (const c of g) member[c] = 1;
    const cell = state * cols + g[0]!;
    for (const cube of coverColumns(member, n)) {
      let free = 0;
      for (let f = cube.free; f; f &= f - 1) free++;
      out.push({ cube, text: cubeToText(cube, n), free, cell });
    }
  }
  // cubes of one row never repeat (the groups are disjoint), so size and text order them fully
  return out.sort((a, b) => b.free - a.free || (a.text < b.text ? -1 : a.text > b.text ? 1 : 0));
}
