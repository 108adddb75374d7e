/** `quiesce simulate FILE --inputs "00 01 11"`: power-up on the first vector, then one event per vector. */
import { DOUBLE_CHANGE_POLICIES, FlowTableError, type DoubleChangePolicy } from '../../engine/model';
import { simulateTable, type Simulation } from '../../engine/simulate';
import { CliError } from '../io';
import { FROM_OPTION, JSON_OPTION, toPrettyJson } from './shared';
import type { CliCommand } from './types';

/** The simulation as a text table for people. */
export function simulationToText(sim: Simulation): string {
  const rows = [['step', 'inputs', 'state', 'outputs', 'fault', 'path']];
  sim.steps.forEach((s, i) => {
    rows.push([String(i), s.inputs, s.state, s.outputs || '-', s.fault === 'none' ? '-' : s.fault, s.path.map((p) => `${p.state}@${p.inputs}`).join(' > ')]);
  });
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => r[c]!.length)));
  return `policy: ${sim.policy}\n${rows.map((r) => r.map((x, c) => (c === r.length - 1 ? x : x.padEnd(widths[c]!))).join('  ').trimEnd()).join('\n')}\n`;
}

/** The simulate command. */
export const command: CliCommand = {
  usage: 'simulate FILE --inputs "00 01 11" [--policy POLICY] [--json] [--from FORMAT]',
  description:
    'Simulates the controller as the generated firmware runs it: power-up settles from the reset state in the first vector, then each following vector is one event (double changes follow the policy). Prints every step with its path through transient cells. Exits 1 when a step faults.',
  options: {
    inputs: { type: 'string', short: 'i', value: 'VECTORS', description: 'column keys separated by spaces or commas; the first is the power-up inputs' },
    policy: { type: 'string', value: 'POLICY', description: `double-change policy (${DOUBLE_CHANGE_POLICIES.join(', ')}); default: the table's setting` },
    json: JSON_OPTION,
    from: FROM_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    if (typeof ctx.values.inputs !== 'string') throw new CliError('simulate: missing --inputs', 'e.g. --inputs "00 01 11"; the first vector is the power-up inputs');
    const vectors = ctx.values.inputs.split(/[\s,]+/).filter((v) => v !== '');
    const policy = ctx.values.policy;
    if (typeof policy === 'string' && !(DOUBLE_CHANGE_POLICIES as readonly string[]).includes(policy))
      throw new CliError(`--policy ${JSON.stringify(policy)} is not a double-change policy`, `one of ${DOUBLE_CHANGE_POLICIES.join(', ')}`);
    const { table } = await ctx.load(ctx.positionals[0]!);
    let sim: Simulation;
    try {
      sim = simulateTable(table, vectors, typeof policy === 'string' ? { policy: policy as DoubleChangePolicy } : {});
    } catch (e) {
      if (!(e instanceof FlowTableError)) throw e;
      const first = e.issues[0]!;
      const index = /^inputs\[(\d+)\]$/.exec(first.where);
      throw new CliError(`--inputs: ${index ? `vector ${Number(index[1]) + 1}: ` : ''}${first.message}${e.issues.length > 1 ? ` (and ${e.issues.length - 1} more)` : ''}`, first.hint);
    }
    ctx.io.stdout(ctx.values.json ? `${toPrettyJson(sim)}\n` : simulationToText(sim));
    return sim.steps.some((s) => s.fault !== 'none') ? 1 : 0;
  },
};
