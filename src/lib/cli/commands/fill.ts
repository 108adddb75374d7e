/** `quiesce fill FILE`: give don't-care outputs in transient cells values that cannot glitch. */
import { exportTable, FORMATS } from '../../engine/formats/index';
import { tableToJson } from '../../engine/formats/json';
import { pluralize } from '../../engine/formats/names';
import { fillOutputs } from '../../engine/fill';
import { checkFormat } from '../io';
import { FROM_OPTION, indentJson, JSON_OPTION, OUT_OPTION, writeResult } from './shared';
import type { CliCommand } from './types';

/** The fill command. */
export const command: CliCommand = {
  usage: `fill FILE [--to ${FORMATS.join('|')}] [--json] [-o FILE] [--from FORMAT]`,
  description:
    "Assigns don't-care outputs in transient cells so that no single-input change can glitch: between equal stable values the transient cell takes that value; between different values the change stays monotone. Prints the filled table (in the source format unless --to) and, on stderr, what was filled and every change that glitches whatever is filled. Exits 1 when such a change remains.",
  options: {
    to: { type: 'string', value: 'FORMAT', description: 'format of the filled table (default: the input format)' },
    json: { ...JSON_OPTION, description: 'print {"assignments", "conflicts", "table"} as JSON' },
    out: OUT_OPTION,
    from: FROM_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    const to = typeof ctx.values.to === 'string' ? checkFormat(ctx.values.to, '--to') : undefined;
    const { table, format } = await ctx.load(ctx.positionals[0]!);
    const r = fillOutputs(table);
    if (ctx.values.json) {
      await writeResult(
        `{\n  "assignments": ${JSON.stringify(r.assignments)},\n  "conflicts": ${JSON.stringify(r.conflicts)},\n  "table": ${indentJson(tableToJson(r.table), '  ')}\n}\n`,
        ctx.values.out,
        ctx.io.stdout,
      );
    } else {
      await writeResult(exportTable(r.table, to ?? format), ctx.values.out, ctx.io.stdout);
      const lines = [`filled ${pluralize(r.assignments.length, "don't-care output")}; ${pluralize(r.conflicts.length, 'change')} still glitch${r.conflicts.length === 1 ? 'es' : ''}`];
      for (const c of r.conflicts) lines.push(`  (${c.state}, ${c.from}) -> ${c.inputs}, output ${c.output}: ${c.reason}`);
      ctx.io.stderr(`${lines.join('\n')}\n`);
    }
    return r.conflicts.length ? 1 : 0;
  },
};
