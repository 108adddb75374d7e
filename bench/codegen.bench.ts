/**
 * Codegen benchmark: generation time of a 256x256 table; flash and RAM of the C handler on
 * Cortex-M0+ (arm-none-eabi-size) for the demo controllers and a 64-state x 16-column table; and
 * instructions per event of the host build at -O2 (valgrind callgrind, counting only inside the
 * event function) for a small and a large table, whose ratio shows constant time.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { generateBundle } from '../src/lib/codegen/bundle';
import { compileMachine } from '../src/lib/codegen/compile';
import { tableBytes } from '../src/lib/codegen/targets/common';
import { createTable, interchangeToTable, setCellBits, type FlowTable } from '../src/lib/engine/model';
import { median, type BenchRow } from './types';

const GROUP = 'codegen';
const root = new URL('..', import.meta.url).pathname;

/**
 * An invented table of `states` states over `inputs` inputs, every cell specified: state s is
 * stable where its low bits equal the column's (mod `home` columns), any other cell settles in
 * one step to the stable state of its own group. Outputs are fixed pseudo-random bits.
 */
export function syntheticTable(states: number, inputs: number, outputs: number, home = 16): FlowTable {
  const cols = 1 << inputs;
  const t = createTable({
    name: `synthetic_${states}x${cols}`,
    inputs: Array.from({ length: inputs }, (_, i) => `in${i}`),
    outputs: Array.from({ length: outputs }, (_, i) => `out${i}`),
    states: Array.from({ length: states }, (_, i) => `s${i}`),
  });
  const h = Math.min(home, cols, states);
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) >>> 0) >>> 16) & 1;
  for (let s = 0; s < states; s++)
    for (let c = 0; c < cols; c++) {
      const target = Math.min(states - 1, s - (s % h) + (c % h));
      t.next[s * cols + c] = target;
      let bits = '';
      for (let k = 0; k < outputs; k++) bits += rnd() ? '1' : '0';
      setCellBits(t, s * cols + c, bits);
    }
  return t;
}

function loadDemos(): FlowTable[] {
  const dir = join(root, 'tests', 'fixtures', 'demo');
  return readdirSync(dir)
    .filter((f) => f.endsWith('.json'))
    .sort()
    .map((f) => interchangeToTable(JSON.parse(readFileSync(join(dir, f), 'utf8'))));
}

async function medianMs(fn: () => Promise<unknown>, runs: number): Promise<number> {
  await fn();
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    await fn();
    times.push(performance.now() - t0);
  }
  return median(times);
}

function has(tool: string): boolean {
  try {
    execFileSync(tool, ['--version'], { stdio: 'ignore' });
    return true;
  } catch {
    return false;
  }
}

async function writeC(t: FlowTable, dir: string): Promise<string> {
  const b = await generateBundle(t, { target: 'c', revision: 'bench' });
  for (const f of b.files) writeFileSync(join(dir, f.path), f.content);
  return b.manifest.identifiers.prefix;
}

/** sizeof the C machine struct {state, inputs, outputs, fault}: each field aligned to its size, total to the largest. */
function machineBytes(...bits: number[]): number {
  const sizes = [...bits.map((b) => b / 8), 1];
  let offset = 0;
  for (const z of sizes) offset = Math.ceil(offset / z) * z + z;
  const align = Math.max(...sizes);
  return Math.ceil(offset / align) * align;
}

/** Sizes of sections and of the event function in a Cortex-M0+ object. */
function armSizes(dir: string, prefix: string): { text: number; rodata: number; ram: number; event: number } {
  const obj = join(dir, `${prefix}.o`);
  execFileSync('arm-none-eabi-gcc', ['-std=c99', '-mcpu=cortex-m0plus', '-mthumb', '-Os', '-Werror', '-ffunction-sections', '-fdata-sections', '-c', `${prefix}.c`, '-o', obj], { cwd: dir });
  const sections = execFileSync('arm-none-eabi-size', ['-A', obj], { encoding: 'utf8' });
  let text = 0;
  let rodata = 0;
  let ram = 0;
  for (const line of sections.split('\n')) {
    const m = /^\.(\S+)\s+(\d+)/.exec(line);
    if (!m) continue;
    const size = Number(m[2]);
    if (m[1]!.startsWith('text')) text += size;
    else if (m[1]!.startsWith('rodata')) rodata += size;
    else if (m[1]!.startsWith('data') || m[1]!.startsWith('bss')) ram += size;
  }
  const symbols = execFileSync('arm-none-eabi-nm', ['--size-sort', '-S', obj], { encoding: 'utf8' });
  const ev = new RegExp(`^[0-9a-f]+ ([0-9a-f]+) T ${prefix}_event$`, 'm').exec(symbols);
  return { text, rodata, ram, event: ev ? parseInt(ev[1]!, 16) : 0 };
}

/** A walk of single-input changes (and, when `doubles`, some two-bit changes), as column indices. */
function walkColumns(inputs: number, length: number, doubles: boolean): number[] {
  let seed = 99;
  const rnd = (n: number) => ((seed = (seed * 1664525 + 1013904223) >>> 0) >>> 8) % n;
  let c = 0;
  const out = [c];
  for (let i = 1; i < length; i++) {
    const a = rnd(inputs);
    c ^= 1 << a;
    if (doubles && inputs > 1 && rnd(4) === 0) c ^= 1 << ((a + 1 + rnd(inputs - 1)) % inputs);
    out.push(c);
  }
  return out;
}

/** Instructions executed inside `<prefix>_event` per event (callgrind, host -O2). */
function instructionsPerEvent(dir: string, prefix: string, inputs: number, doubles: boolean): number {
  const events = 20000;
  const walk = walkColumns(inputs, events + 1, doubles);
  const driver = [
    `#include "${prefix}.h"`,
    `static const ${prefix}_inputs_t walk[${walk.length}] = { ${walk.join(', ')} };`,
    'int main(void)',
    '{',
    `    ${prefix}_machine_t m;`,
    '    unsigned long acc = 0u;',
    '    unsigned i;',
    `    ${prefix}_init(&m, walk[0]);`,
    `    for (i = 1u; i < ${walk.length}u; i++) {`,
    `        acc += (unsigned long)${prefix}_event(&m, walk[i]);`,
    '    }',
    '    return (int)(acc & 1u);',
    '}',
    '',
  ].join('\n');
  writeFileSync(join(dir, 'driver.c'), driver);
  execFileSync('gcc', ['-std=c99', '-O2', '-c', `${prefix}.c`, '-o', 'host.o'], { cwd: dir });
  execFileSync('gcc', ['-std=c99', '-O2', 'driver.c', 'host.o', '-o', 'driver'], { cwd: dir });
  const out = join(dir, 'callgrind.out');
  try {
    execFileSync('valgrind', ['--tool=callgrind', `--toggle-collect=${prefix}_event`, `--callgrind-out-file=${out}`, './driver'], { cwd: dir, stdio: 'ignore' });
  } catch {
    // the driver's exit status is the parity of the outputs, not an error
  }
  const text = readFileSync(out, 'utf8');
  const m = /^(?:summary|totals): (\d+)/m.exec(text);
  return m ? Number(m[1]) / events : NaN;
}

/** Runs the codegen benchmark. */
export async function run(): Promise<BenchRow[]> {
  const rows: BenchRow[] = [];
  const big = syntheticTable(256, 8, 8);
  const genC = await medianMs(() => generateBundle(big, { target: 'c' }), 3);
  const genRust = await medianMs(() => generateBundle(big, { target: 'rust' }), 3);
  rows.push({ group: GROUP, case: 'generate C bundle, 256 states x 256 columns', value: `${genC.toFixed(0)} ms` });
  rows.push({ group: GROUP, case: 'generate Rust bundle, 256 states x 256 columns', value: `${genRust.toFixed(0)} ms` });

  const work = mkdtempSync(join(tmpdir(), 'quiesce-bench-codegen-'));
  try {
    if (has('arm-none-eabi-gcc') && has('arm-none-eabi-size')) {
      const targets = [...loadDemos(), syntheticTable(64, 4, 4)];
      for (const t of targets) {
        const dir = mkdtempSync(join(work, 'arm-'));
        const prefix = await writeC(t, dir);
        const s = armSizes(dir, prefix);
        const m = compileMachine(t);
        const expected = tableBytes(m);
        const cells = `${t.states.length}x${1 << t.inputs.length}`;
        rows.push({ group: GROUP, case: `Cortex-M0+ code (.text), ${t.name} ${cells}`, value: `${s.text} B (event ${s.event} B)`, target: '<= ~300 B', ok: s.text <= 300 });
        rows.push({
          group: GROUP,
          case: `Cortex-M0+ tables (.rodata), ${t.name}`,
          value: `${s.rodata} B; states x columns x (1 + output bytes) = ${t.states.length * (1 << t.inputs.length) * (1 + Math.ceil((2 * t.outputs.length) / 8))} B`,
          target: `~ ${expected} B`,
          ok: s.rodata <= expected + 16,
        });
        rows.push({ group: GROUP, case: `Cortex-M0+ static RAM (.data + .bss), ${t.name}`, value: `${s.ram} B (+ ${machineBytes(m.stateBits, m.inputBits, m.outputBits)} B per machine struct, caller-owned)` });
      }
    } else rows.push({ group: GROUP, case: 'Cortex-M0+ sizes', value: 'arm-none-eabi-gcc not installed', ok: false });

    if (has('valgrind') && has('gcc')) {
      const small = loadDemos().find((t) => t.name === 'oven_door_interlock') ?? loadDemos()[0]!;
      const cases: [string, FlowTable][] = [
        ['small (oven_door_interlock 4x8)', small],
        ['large (synthetic 256x256)', big],
      ];
      const per: Record<string, number> = {};
      for (const doubles of [false, true])
        for (const [label, t] of cases) {
          const dir = mkdtempSync(join(work, 'host-'));
          const prefix = await writeC(t, dir);
          const ipe = instructionsPerEvent(dir, prefix, t.inputs.length, doubles);
          per[`${label}${doubles}`] = ipe;
          rows.push({
            group: GROUP,
            case: `x86-64 -O2 instructions/event, ${label}, ${doubles ? 'with 25% double changes (guarded)' : 'single-input changes'}`,
            value: ipe.toFixed(1),
            target: doubles ? undefined : '<= ~40',
            ok: doubles ? undefined : ipe <= 40,
          } as BenchRow);
        }
      for (const doubles of [false, true]) {
        const ratio = per[`${cases[1]![0]}${doubles}`]! / per[`${cases[0]![0]}${doubles}`]!;
        rows.push({ group: GROUP, case: `instructions/event ratio large/small, ${doubles ? 'with double changes' : 'single-input changes'}`, value: ratio.toFixed(2), target: '~1 (constant time)', ok: ratio > 0.8 && ratio < 1.25 });
      }
    } else rows.push({ group: GROUP, case: 'instructions per event', value: 'valgrind not installed', ok: false });
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
  return rows;
}

