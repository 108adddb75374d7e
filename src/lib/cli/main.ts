/**
 * `quiesce`: a thin shell over the engine. Exit codes: 0 no error findings, 1 error findings,
 * 2 invalid input or usage (a located message on stderr, never a stack trace).
 */
import { readFileSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { FlowTableError } from '../engine/model';
import { COMMANDS } from './commands/index';
import type { CliCommand, CliOption, CommandContext } from './commands/types';
import { CliError, createProcessIo, formatFlowTableError, loadSource, type CliIo } from './io';

/** A FlowTableError from reading one file, kept with the file name for the message. */
class SourceError extends Error {
  constructor(
    readonly file: string,
    readonly error: FlowTableError,
  ) {
    super(error.message);
  }
}

const HELP_OPTION: CliOption = { type: 'boolean', short: 'h', description: 'show this help' };

function readVersion(): string {
  try {
    const pkg = JSON.parse(readFileSync(new URL('../../../package.json', import.meta.url), 'utf8')) as { version?: string };
    return pkg.version ?? 'unknown';
  } catch {
    return 'unknown';
  }
}

function formatOverview(): string {
  const width = Math.max(...Object.keys(COMMANDS).map((k) => k.length));
  return [
    'quiesce: check, minimize and convert fundamental-mode flow tables',
    '',
    'usage: quiesce COMMAND [options]',
    '',
    'commands:',
    ...Object.entries(COMMANDS).map(([name, e]) => `  ${name.padEnd(width)}  ${e.summary}`),
    '',
    'Input files: .qfl (Quiesce text), .json, .kiss2/.kiss, .csv; or --from FORMAT.',
    'Exit codes: 0 no error findings, 1 error findings, 2 invalid input.',
    'Run `quiesce COMMAND --help` for the options of one command.',
    '',
  ].join('\n');
}

function formatCommandHelp(cmd: CliCommand): string {
  const opts = Object.entries({ ...cmd.options, help: HELP_OPTION }).map(([key, o]) => {
    const flag = `${o.short ? `-${o.short}, ` : ''}--${key}${o.type === 'string' ? ` ${o.value ?? 'VALUE'}` : ''}`;
    return [flag, o.description] as const;
  });
  const w = Math.max(...opts.map(([f]) => f.length));
  return [`usage: quiesce ${cmd.usage}`, '', cmd.description, '', 'options:', ...opts.map(([f, d]) => `  ${f.padEnd(w)}  ${d}`), ''].join('\n');
}

/** Runs the CLI with arguments (without `node` and the script); resolves to the exit code. */
export async function main(argv: string[], io: CliIo = createProcessIo()): Promise<number> {
  try {
    return await runCommand(argv, io);
  } catch (e) {
    return reportError(e, io);
  }
}

async function runCommand(argv: string[], io: CliIo): Promise<number> {
  const [first, ...rest] = argv;
  if (first === undefined) {
    io.stderr(formatOverview());
    return 2;
  }
  if (first === '--help' || first === '-h') {
    io.stdout(formatOverview());
    return 0;
  }
  if (first === '--version' || first === '-v') {
    io.stdout(`quiesce ${readVersion()}\n`);
    return 0;
  }
  let name = first;
  let args = rest;
  if (first === 'help') {
    if (rest[0] === undefined) {
      io.stdout(formatOverview());
      return 0;
    }
    name = rest[0];
    args = ['--help'];
  }
  const entry = Object.hasOwn(COMMANDS, name) ? COMMANDS[name] : undefined;
  if (!entry) {
    if (name.startsWith('-')) throw new CliError(`unknown option ${JSON.stringify(name)}`, 'options go after the command, e.g. `quiesce analyze door.qfl --json`; run `quiesce --help`');
    const near = Object.keys(COMMANDS).find((k) => k.startsWith(name.slice(0, 3)));
    throw new CliError(`unknown command ${JSON.stringify(name)}`, near ? `did you mean \`quiesce ${near}\`?` : `commands: ${Object.keys(COMMANDS).join(', ')}`);
  }
  const { command } = await entry.load();
  const options = { ...command.options, help: HELP_OPTION };
  let parsed: { values: Record<string, string | boolean | undefined>; positionals: string[] };
  try {
    parsed = parseArgs({
      args,
      options: Object.fromEntries(Object.entries(options).map(([k, o]) => [k, { type: o.type, ...(o.short ? { short: o.short } : {}) }])),
      allowPositionals: true,
      strict: true,
    }) as typeof parsed;
  } catch (e) {
    const msg = e instanceof Error ? e.message.split('\n')[0]!.replace(/\. To specify a positional argument.*$/, '') : String(e);
    throw new CliError(`${name}: ${msg}`, `run \`quiesce ${name} --help\``);
  }
  if (parsed.values.help) {
    io.stdout(formatCommandHelp(command));
    return 0;
  }
  const { min, max } = command.positionals;
  if (parsed.positionals.length < min) throw new CliError(`${name}: missing ${min - parsed.positionals.length === 1 && min === 1 ? 'FILE' : 'arguments'}`, `usage: quiesce ${command.usage}`);
  if (parsed.positionals.length > max) throw new CliError(`${name}: unexpected argument ${JSON.stringify(parsed.positionals[max])}`, `usage: quiesce ${command.usage}`);
  const from = typeof parsed.values.from === 'string' ? parsed.values.from : undefined;
  const ctx: CommandContext = {
    values: parsed.values,
    positionals: parsed.positionals,
    io,
    load: async (file) => {
      try {
        return await loadSource(io, file, from);
      } catch (e) {
        if (e instanceof FlowTableError) throw new SourceError(file, e);
        throw e;
      }
    },
  };
  return await command.run(ctx);
}

function reportError(e: unknown, io: CliIo): number {
  if (e instanceof SourceError) io.stderr(`${formatFlowTableError(e.file, e.error)}\n`);
  else if (e instanceof CliError) io.stderr(`quiesce: ${e.message}${e.hint ? ` (hint: ${e.hint})` : ''}\n`);
  else if (e instanceof FlowTableError) io.stderr(`${formatFlowTableError('quiesce', e)}\n`);
  else io.stderr(`quiesce: internal error: ${e instanceof Error ? e.message : String(e)}\n`);
  return 2;
}
