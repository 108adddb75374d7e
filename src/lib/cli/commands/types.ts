/**
 * The shape of one CLI command module. A command lives in `src/lib/cli/commands/NAME.ts`,
 * exports `command: CliCommand`, and is listed by one line in `commands/index.ts`.
 */
import type { CliIo, LoadedSource } from '../io';

/** One option of a command, in node:util parseArgs terms plus help text. */
export interface CliOption {
  type: 'string' | 'boolean';
  short?: string;
  /** Shown in `--help`, e.g. `--to FORMAT  output format`. */
  description: string;
  /** Placeholder for a string value in `--help`, e.g. `FORMAT`. */
  value?: string;
}

/** What a running command gets. */
export interface CommandContext {
  /** Option values parsed by parseArgs. */
  values: Record<string, string | boolean | undefined>;
  positionals: string[];
  io: CliIo;
  /** Reads and parses a source file (`-` = standard input), honouring `--from`. */
  load: (file: string) => Promise<LoadedSource>;
}

/** One command. `run` returns the exit code: 0 fine, 1 error findings, 2 invalid input. */
export interface CliCommand {
  /** e.g. `analyze FILE [--json]`. */
  usage: string;
  /** One paragraph for `quiesce help NAME`. */
  description: string;
  options: Record<string, CliOption>;
  /** Number of positional arguments allowed. */
  positionals: { min: number; max: number };
  run: (ctx: CommandContext) => Promise<number>;
}
