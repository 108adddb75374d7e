/** Source formats: choosing one by file name, parsing any of them, and exporting to any of them. */
import { FlowTableError, LIMITS, type FlowTable } from '../model';
import { parseCsv, tableToCsv } from './csv';
import { parseJson, tableToJson } from './json';
import { parseKiss2, tableToKiss2 } from './kiss2';
import { checkSourceText } from './source';
import { parseText, tableToText } from './text';

export { parseCsv, tableToCsv, readCsvRecords, formatCsvField, type CsvOptions, type CsvField, type CsvRecord } from './csv';
export { parseJson, tableToJson, readJson, MAX_JSON_DEPTH } from './json';
export { parseKiss2, tableToKiss2, type Kiss2Options } from './kiss2';
export { parseText, tableToText, GRID_MAX_INPUTS } from './text';
export { MAX_SOURCE_BYTES, MAX_ISSUES, checkSourceText, offsetToLineColumn, countUtf8Bytes } from './source';
export { TEXT_KEYWORDS, isBareName, formatName } from './names';
export { coverColumns, cubeToText, textToCube, forEachCubeColumn, type Cube } from './cubes';

/** The source formats Quiesce reads and writes. */
export const FORMATS = ['text', 'json', 'kiss2', 'csv'] as const;

/** One of FORMATS. */
export type SourceFormat = (typeof FORMATS)[number];

/** File extensions of each format; the first is the one written. */
export const FORMAT_EXTENSIONS: Record<SourceFormat, readonly string[]> = {
  text: ['.qfl'],
  json: ['.json'],
  kiss2: ['.kiss2', '.kiss'],
  csv: ['.csv'],
};

/** Media types for downloads of each format. */
export const FORMAT_MEDIA_TYPES: Record<SourceFormat, string> = {
  text: 'text/plain; charset=utf-8',
  json: 'application/json',
  kiss2: 'text/plain; charset=utf-8',
  csv: 'text/csv; charset=utf-8',
};

/** True when `s` names a source format. */
export function isSourceFormat(s: string): s is SourceFormat {
  return (FORMATS as readonly string[]).includes(s);
}

/** The format a file name's extension implies (case-insensitive), or undefined. */
export function formatFromFilename(name: string): SourceFormat | undefined {
  const lower = name.toLowerCase();
  for (const f of FORMATS) if (FORMAT_EXTENSIONS[f].some((ext) => lower.endsWith(ext))) return f;
  return undefined;
}

/** A valid table name from a file name: the base name without its extension, cleaned up. */
export function nameFromFilename(filename: string): string {
  const base = filename.split(/[\\/]/).pop() ?? '';
  const stem = base.includes('.') ? base.slice(0, base.lastIndexOf('.')) : base;
  // eslint-disable-next-line no-control-regex
  const clean = stem.replace(/[\u0000-\u001f\u007f/]/g, '_').trim().slice(0, LIMITS.nameLength).trim();
  return clean || 'table';
}

/** Parses source text in the given format; every failure is a located FlowTableError. */
export function parseSource(text: string, format: SourceFormat, opts: { name?: string } = {}): FlowTable {
  checkSourceText(text);
  switch (format) {
    case 'text':
      return parseText(text);
    case 'json':
      return parseJson(text);
    case 'kiss2':
      return parseKiss2(text, opts.name !== undefined ? { name: opts.name } : {});
    case 'csv':
      return parseCsv(text, opts.name !== undefined ? { name: opts.name } : {});
    default:
      throw new FlowTableError([{ where: 'format', message: `unknown format "${String(format)}"`, hint: `one of ${FORMATS.join(', ')}` }]);
  }
}

/** Prints a table in the given format. */
export function exportTable(t: FlowTable, format: SourceFormat): string {
  switch (format) {
    case 'text':
      return tableToText(t);
    case 'json':
      return tableToJson(t);
    case 'kiss2':
      return tableToKiss2(t);
    case 'csv':
      return tableToCsv(t);
    default:
      throw new FlowTableError([{ where: 'format', message: `unknown format "${String(format)}"`, hint: `one of ${FORMATS.join(', ')}` }]);
  }
}
