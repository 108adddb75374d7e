/**
 * The Build view's footprint estimate against the real cross compiler: table bytes must match
 * the .rodata that arm-none-eabi-gcc emits, and the code model must stay within 15 % of .text.
 */
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { cloneTable, createTable, DOUBLE_CHANGE_POLICIES, setCellBits, type FlowTable } from '../../../src/lib/engine/model';
import { estimateFootprint, generateBundle } from '../../../src/lib/codegen';
import { ARM_CFLAGS, loadDemoTables, run, wideTable, writeFiles } from './support';

async function armSections(t: FlowTable): Promise<{ text: number; rodata: number }> {
  const bundle = await generateBundle(t, { target: 'c' });
  const dir = mkdtempSync(join(tmpdir(), 'quiesce-footprint-'));
  writeFiles(dir, bundle.files);
  const source = bundle.files.find((f) => f.path.endsWith('.c') && !/(_test|replay)\.c$/.test(f.path))!.path;
  const object = join(dir, 'handler.o');
  const cc = await run('arm-none-eabi-gcc', [...ARM_CFLAGS, join(dir, source), '-o', object]);
  expect(cc.code, cc.stderr).toBe(0);
  const size = await run('arm-none-eabi-size', ['-A', object]);
  let text = 0;
  let rodata = 0;
  for (const line of size.stdout.split('\n')) {
    const m = /^(\.\S+)\s+(\d+)/.exec(line);
    if (!m) continue;
    if (m[1]!.startsWith('.text')) text += Number(m[2]);
    else if (m[1]!.startsWith('.rodata')) rodata += Number(m[2]);
  }
  return { text, rodata };
}

/** 20 outputs, past the packed output word, so the split layout (two u32 masks per cell) is used. */
function manyOutputs(): FlowTable {
  const t = createTable({ name: 'many_outputs', inputs: ['a', 'b', 'c'], outputs: Array.from({ length: 20 }, (_, i) => `o${i}`), states: ['s0', 's1'] });
  for (let s = 0; s < 2; s++)
    for (let c = 0; c < 8; c++) {
      t.next[s * 8 + c] = c % 2;
      setCellBits(t, s * 8 + c, c % 2 ? '01'.repeat(10) : '1-'.repeat(10));
    }
  return t;
}

describe('estimateFootprint', () => {
  const tables = [...loadDemoTables().map((d) => d.table), wideTable(), manyOutputs()];
  for (const base of tables)
    for (const policy of DOUBLE_CHANGE_POLICIES) {
      it(`${base.name} (${base.outputs.length} outputs), ${policy}: tables exact, code within 15 % of arm-none-eabi-size`, async () => {
        const t = cloneTable(base);
        t.settings.doubleChange = policy;
        const est = estimateFootprint(t);
        const real = await armSections(t);
        expect(real.rodata).toBeGreaterThanOrEqual(est.tableBytes);
        // state-name strings and alignment padding sit in .rodata beside the tables
        expect(real.rodata - est.tableBytes).toBeLessThanOrEqual(16);
        expect(Math.abs(real.text - est.codeBytes) / real.text).toBeLessThanOrEqual(0.15);
      });
    }
});
