/** Options and helpers several commands share. */
import { writeFile } from 'node:fs/promises';
import { FORMATS } from '../../engine/formats/index';
import type { CliOption } from './types';
import { CliError } from '../io';

/** `--from FORMAT`: override the format chosen by the file extension. */
export const FROM_OPTION: CliOption = { type: 'string', value: 'FORMAT', description: `input format (${FORMATS.join(', ')}); default: by file extension` };

/** `--json`: machine-readable output. */
export const JSON_OPTION: CliOption = { type: 'boolean', description: 'print JSON instead of text for people' };

/** `-o, --out FILE`: write to a file instead of standard output. */
export const OUT_OPTION: CliOption = { type: 'string', short: 'o', value: 'FILE', description: 'write the result to FILE instead of standard output' };

/** Writes `text` to `--out FILE` when given, else to standard output. */
export async function writeResult(text: string, out: string | boolean | undefined, stdout: (s: string) => void): Promise<void> {
  if (typeof out !== 'string') {
    stdout(text);
    return;
  }
  try {
    await writeFile(out, text);
  } catch (e) {
    throw new CliError(`cannot write ${out}: ${e instanceof Error ? e.message : String(e)}`);
  }
}

/** Indents every line after the first of a multi-line JSON text by `pad`, to embed it in a larger document. */
export function indentJson(json: string, pad: string): string {
  return json.trimEnd().split('\n').join(`\n${pad}`);
}

const isPrimitive = (v: unknown) => v === null || typeof v !== 'object';

/**
 * JSON for people and machines alike: arrays of plain values and short flat objects on one line,
 * everything else indented by two spaces. Object key order is kept as given.
 */
export function toPrettyJson(value: unknown, indent = ''): string {
  if (isPrimitive(value)) return JSON.stringify(value) ?? 'null';
  const inner = `${indent}  `;
  if (Array.isArray(value)) {
    if (value.length === 0) return '[]';
    if (value.every(isPrimitive)) return `[${value.map((v) => JSON.stringify(v) ?? 'null').join(', ')}]`;
    return `[\n${value.map((v) => `${inner}${toPrettyJson(v, inner)}`).join(',\n')}\n${indent}]`;
  }
  const entries = Object.entries(value as Record<string, unknown>).filter(([, v]) => v !== undefined);
  if (entries.length === 0) return '{}';
  const flat = entries.every(([, v]) => isPrimitive(v) || (Array.isArray(v) && v.every(isPrimitive)));
  if (flat) {
    const line = `{ ${entries.map(([k, v]) => `${JSON.stringify(k)}: ${toPrettyJson(v, inner)}`).join(', ')} }`;
    if (line.length + indent.length <= 100) return line;
  }
  return `{\n${entries.map(([k, v]) => `${inner}${JSON.stringify(k)}: ${toPrettyJson(v, inner)}`).join(',\n')}\n${indent}}`;
}
