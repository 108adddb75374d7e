/**
 * Formatting: the final pass over every rendered file, and the layout of data tables. Templates
 * only place text; line layout of tables and whitespace clean-up happen here.
 */

/** Final pass over a rendered file: LF line ends, no trailing spaces, no leading or doubled blank lines, one final newline. */
export function finishText(text: string): string {
  const lines = text.replace(/\r\n?/g, '\n').split('\n').map((l) => l.replace(/[ \t]+$/, ''));
  const out: string[] = [];
  for (const line of lines) {
    if (line === '' && (out.length === 0 || out[out.length - 1] === '')) continue;
    out.push(line);
  }
  while (out.length && out[out.length - 1] === '') out.pop();
  return `${out.join('\n')}\n`;
}

/** Number literal in hex with at least `digits` digits (`0x0F`), plus a suffix such as `u`. */
export function hexLiteral(value: number, digits: number, suffix = ''): string {
  return `0x${(value >>> 0).toString(16).toUpperCase().padStart(digits, '0')}${suffix}`;
}

/** One labelled group of array entries (a state's row, a test step). */
export interface TableRow {
  /** A comment line before the row, already escaped for the target; omitted when empty. */
  comment?: string;
  values: string[];
}

/**
 * Lays out array entries: each row starts on a new line (after its comment), entries are
 * separated by `, ` and wrapped at `perLine`; every line ends with a comma.
 */
export function formatRows(rows: TableRow[], indent: string, perLine: number, commentStyle: 'c' | 'rust'): string {
  const lines: string[] = [];
  for (const row of rows) {
    if (row.comment) lines.push(commentStyle === 'c' ? `${indent}/* ${row.comment} */` : `${indent}// ${row.comment}`);
    for (let i = 0; i < row.values.length; i += perLine) lines.push(`${indent}${row.values.slice(i, i + perLine).join(', ')},`);
  }
  return lines.join('\n');
}
