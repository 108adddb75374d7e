/**
 * The command registry: one line per command, loaded on demand. To add a command, write
 * `commands/NAME.ts` exporting `command: CliCommand` and add its line here.
 */
import type { CliCommand } from './types';

/** A registered command: a one-line summary for `quiesce --help` and its loader. */
export interface CommandEntry {
  summary: string;
  load: () => Promise<{ command: CliCommand }>;
}

/** Every command, in the order `--help` lists them. */
export const COMMANDS: Record<string, CommandEntry> = {
  analyze: { summary: 'check a table: stable total states, reachable states, findings', load: () => import('./analyze') },
  minimize: { summary: 'reduce the number of rows (minimum closed cover of compatibles)', load: () => import('./minimize') },
  simulate: { summary: 'run input vectors from power-up and show every step', load: () => import('./simulate') },
  fill: { summary: "give don't-care outputs values so single-input changes cannot glitch", load: () => import('./fill') },
  convert: { summary: 'convert between .qfl text, JSON, CSV and KISS2', load: () => import('./convert') },
  generate: { summary: 'write the C or Rust handler with its unit tests as files or a reproducible zip', load: () => import('./generate') },
};
