/** `quiesce analyze FILE`: stable total states, reachable states and findings. */
import { analyzeTable, type Analysis } from '../../engine/analyze';
import type { Finding } from '../../engine/findings';
import type { FlowTable } from '../../engine/model';
import { pluralize } from '../../engine/formats/names';
import { FROM_OPTION, JSON_OPTION, toPrettyJson } from './shared';
import type { CliCommand } from './types';

/** Keys of a finding that say where it is (the engine contract), in print order. */
const LOCATION_KEYS = ['state', 'from', 'inputs', 'output', 'cycle', 'of', 'omitted'] as const;

/** A finding as `analyze --json` prints it: code, severity, message, location keys (and the path when asked). */
export function findingToJson(f: Finding, withPath: boolean): Record<string, unknown> {
  const out: Record<string, unknown> = { code: f.code, severity: f.severity, message: f.message };
  for (const k of LOCATION_KEYS) if (f[k] !== undefined) out[k] = f[k];
  if (withPath) out.path = f.path;
  return out;
}

/** The `analyze --json` document. */
export function analysisToJson(a: Analysis, withPath: boolean): Record<string, unknown> {
  return {
    stable: a.stable.map((c) => [c.state, c.inputs]),
    reachable: a.reachable,
    findings: a.findings.map((f) => findingToJson(f, withPath)),
  };
}

/** The analysis as text for people. */
export function analysisToText(t: FlowTable, a: Analysis): string {
  const lines: string[] = [];
  lines.push(`${t.name}: ${pluralize(t.states.length, 'state')}, ${pluralize(t.inputs.length, 'input')}, ${pluralize(t.outputs.length, 'output')}`);
  lines.push(`stable total states (${a.stable.length}): ${a.stable.map((c) => `(${c.state}, ${c.inputs})`).join(' ') || 'none'}`);
  lines.push(`reachable states (${a.reachable.length} of ${t.states.length}): ${a.reachable.join(' ') || 'none'}`);
  const c = a.counts;
  lines.push(`findings: ${pluralize(c.error, 'error')}, ${pluralize(c.warning, 'warning')}, ${c.info} info`);
  const w = Math.max(0, ...a.findings.map((f) => f.code.length));
  for (const f of a.findings) lines.push(`  ${f.severity.padEnd(7)}  ${f.code.padEnd(w)}  ${f.message}`);
  return `${lines.join('\n')}\n`;
}

/** The analyze command. */
export const command: CliCommand = {
  usage: 'analyze FILE [--json] [--paths] [--from FORMAT]',
  description:
    'Checks a flow table in fundamental mode: lists every stable total state, the states reachable from power-up by single-input changes, and the findings (unspecified transitions, oscillations, output glitches, power-up problems, unreachable states, order-dependent double changes, rows without a stable cell). Exits 1 when there is an error finding.',
  options: {
    json: JSON_OPTION,
    paths: { type: 'boolean', description: 'with --json, include the path of cells of each finding' },
    from: FROM_OPTION,
  },
  positionals: { min: 1, max: 1 },
  async run(ctx) {
    const { table } = await ctx.load(ctx.positionals[0]!);
    const a = analyzeTable(table);
    if (ctx.values.json) ctx.io.stdout(`${toPrettyJson(analysisToJson(a, ctx.values.paths === true))}\n`);
    else ctx.io.stdout(analysisToText(table, a));
    return a.counts.error > 0 ? 1 : 0;
  },
};
