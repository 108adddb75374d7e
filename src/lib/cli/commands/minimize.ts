/** `quiesce minimize FILE`: the fewest rows that keep every specified behaviour. */
import { tableToJson } from '../../engine/formats/json';
import { tableToText } from '../../engine/formats/text';
import { minimizeTable, type MinimizeOptions } from '../../engine/minimize/index';
import { CliError } from '../io';
import { FROM_OPTION, indentJson, JSON_OPTION } from './shared';
import type { CliCommand } from './types';

function parsePositiveInt(v: string | boolean | undefined, flag: string): number | undefined {
  if (typeof v !== 'string') return undefined;
  if (!/^\d{1,9}$/.test(v) || Number(v) < 1) throw new CliError(`${flag} ${JSON.stringify(v)} is not a positive whole number`, `e.g. ${flag} 2000`);
  return Number(v);
}

/** The minimize command. */
export const command: CliCommand = {
  usage: 'minimize FILE [--json] [--time-budget MS] [--node-budget N] [--from FORMAT]',
  description:
    'Reduces the number of rows: compatible pairs from the implication chart, maximal and prime compatibles, then a minimum closed cover by branch and bound within the budgets (a heuristic cover past them; "exact" says which). Prints the classes and the reduced table.',
  options: {
    json: JSON_OPTION,
    'time-budget': { type: 'string', value: 'MS', description: 'most milliseconds for the whole minimization; past it a heuristic cover is used (default 2000)' },
    'node-budget': { type: 'string', value: 'N', description: 'most branch-and-bound nodes (default 200000)' },
    from: FROM_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    const timeBudgetMs = parsePositiveInt(ctx.values['time-budget'], '--time-budget');
    const nodeBudget = parsePositiveInt(ctx.values['node-budget'], '--node-budget');
    const { table } = await ctx.load(ctx.positionals[0]!);
    const opts: MinimizeOptions = { ...(timeBudgetMs !== undefined ? { timeBudgetMs } : {}), ...(nodeBudget !== undefined ? { nodeBudget } : {}) };
    const r = minimizeTable(table, opts);
    const classes = r.classes.map((c) => c.map((s) => table.states[s]!));
    if (ctx.values.json) {
      // the table is embedded as canonical interchange JSON, keeping its Gray column order
      ctx.io.stdout(
        `{\n  "states": ${r.classes.length},\n  "exact": ${r.exact},\n  "classes": ${JSON.stringify(classes)},\n  "table": ${indentJson(tableToJson(r.table), '  ')}\n}\n`,
      );
    } else {
      ctx.io.stdout(
        [
          `${table.name}: ${table.states.length} states -> ${r.classes.length} (${r.exact ? 'exact minimum' : 'heuristic: the budget ran out, a smaller cover may exist'})`,
          'classes:',
          ...classes.map((c, i) => `  ${r.table.states[i]}: {${c.join(', ')}}`),
          '',
          tableToText(r.table),
        ].join('\n'),
      );
    }
    return 0;
  },
};
