/** `quiesce convert FILE --to FORMAT`: print a table in another source format. */
import { exportTable, FORMATS } from '../../engine/formats/index';
import { checkFormat, CliError } from '../io';
import { FROM_OPTION, OUT_OPTION, writeResult } from './shared';
import type { CliCommand } from './types';

/** The convert command. */
export const command: CliCommand = {
  usage: `convert FILE --to ${FORMATS.join('|')} [--from FORMAT] [-o FILE]`,
  description:
    'Reads a flow table and prints it in another format. Text (.qfl) and JSON hold everything; CSV holds everything in a grid; KISS2 keeps states, cells, the reset state and, where they fit in one word, input and output names (not the table name, description, settings or scenarios).',
  options: {
    to: { type: 'string', value: 'FORMAT', description: `output format: ${FORMATS.join(', ')}` },
    from: FROM_OPTION,
    out: OUT_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    if (typeof ctx.values.to !== 'string') throw new CliError('convert: missing --to FORMAT', `one of ${FORMATS.join(', ')}`);
    const to = checkFormat(ctx.values.to, '--to');
    const { table } = await ctx.load(ctx.positionals[0]!);
    await writeResult(exportTable(table, to), ctx.values.out, ctx.io.stdout);
    return 0;
  },
};
