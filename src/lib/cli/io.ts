/** The CLI's contact with the outside: streams, reading sources, and printing located errors. */
import { readFile, stat } from 'node:fs/promises';
import { FlowTableError, type FlowTable } from '../engine/model';
import { formatFromFilename, FORMATS, isSourceFormat, MAX_SOURCE_BYTES, nameFromFilename, parseSource, type SourceFormat } from '../engine/formats/index';

/** Where a command writes, and how it reads standard input. */
export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  readStdin: () => Promise<Buffer>;
}

/** The real process streams. */
export function createProcessIo(): CliIo {
  return {
    stdout: (text) => void process.stdout.write(text),
    stderr: (text) => void process.stderr.write(text),
    readStdin: async () => {
      const chunks: Buffer[] = [];
      let size = 0;
      for await (const chunk of process.stdin) {
        const b = Buffer.isBuffer(chunk) ? chunk : Buffer.from(String(chunk));
        size += b.length;
        if (size > MAX_SOURCE_BYTES) throw new CliError(`standard input is larger than ${MAX_SOURCE_BYTES / 1048576} MiB`, 'split the table or use the compact `cells` form');
        chunks.push(b);
      }
      return Buffer.concat(chunks);
    },
  };
}

/** A usage or file problem: printed as one line on stderr, exit code 2. */
export class CliError extends Error {
  constructor(
    message: string,
    readonly hint?: string,
  ) {
    super(message);
    this.name = 'CliError';
  }
}

/** A parsed source file. */
export interface LoadedSource {
  table: FlowTable;
  format: SourceFormat;
  /** The file name as given (`-` for standard input). */
  file: string;
}

/** Checks a `--from`/`--to` value. */
export function checkFormat(value: string, flag: string): SourceFormat {
  if (!isSourceFormat(value)) throw new CliError(`${flag} ${JSON.stringify(value)} is not a format`, `one of ${FORMATS.join(', ')}`);
  return value;
}

/** Reads and parses FILE (or `-` for standard input), choosing the format by `--from` or the extension. */
export async function loadSource(io: CliIo, file: string, from: string | undefined): Promise<LoadedSource> {
  const format = from !== undefined ? checkFormat(from, '--from') : file === '-' ? 'text' : formatFromFilename(file);
  if (!format) throw new CliError(`cannot tell the format of ${JSON.stringify(file)} from its extension`, `use .qfl, .json, .kiss2, .kiss or .csv, or pass --from ${FORMATS.join('|')}`);
  let bytes: Buffer;
  if (file === '-') bytes = await io.readStdin();
  else {
    let size: number;
    try {
      const st = await stat(file);
      if (!st.isFile()) throw new CliError(`${file}: not a regular file`);
      size = st.size;
    } catch (e) {
      if (e instanceof CliError) throw e;
      throw new CliError(`${file}: ${describeFsError(e)}`);
    }
    if (size > MAX_SOURCE_BYTES) throw new CliError(`${file}: the file is ${(size / 1048576).toFixed(1)} MiB; the limit is ${MAX_SOURCE_BYTES / 1048576} MiB`, 'split the table or use the compact `cells` form with cubes');
    try {
      bytes = await readFile(file);
    } catch (e) {
      throw new CliError(`${file}: ${describeFsError(e)}`);
    }
  }
  const text = new TextDecoder('utf-8').decode(bytes);
  return { table: parseSource(text, format, { name: nameFromFilename(file === '-' ? 'stdin' : file) }), format, file };
}

function describeFsError(e: unknown): string {
  const code = (e as { code?: string }).code;
  if (code === 'ENOENT') return 'no such file';
  if (code === 'EACCES' || code === 'EPERM') return 'permission denied';
  if (code === 'EISDIR') return 'is a directory';
  return e instanceof Error ? e.message : String(e);
}

/** Located error lines: `FILE:LINE:COL: message (hint: ...)`, or `FILE: path: message` for JSON paths. */
export function formatFlowTableError(file: string, err: FlowTableError): string {
  return err.issues
    .map((i) => {
      const hint = i.hint ? ` (hint: ${i.hint})` : '';
      const pos = i.line !== undefined ? `${i.line}:${i.column ?? 1}` : undefined;
      if (pos && i.where === pos) return `${file}:${pos}: ${i.message}${hint}`;
      if (pos) return `${file}:${pos}: ${i.where}: ${i.message}${hint}`;
      return `${file}: ${i.where}: ${i.message}${hint}`;
    })
    .join('\n');
}
