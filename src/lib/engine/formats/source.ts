/**
 * What every source parser shares: the size and binary checks run before parsing, and a
 * collector of locateError issues that stops after a fixed number of errors.
 */
import { FlowTableError, type EngineIssue } from '../model';

/** Largest source any parser accepts, in UTF-8 bytes. */
export const MAX_SOURCE_BYTES = 2 * 1024 * 1024;

/** Most issues one parse reports before it stops looking. */
export const MAX_ISSUES = 50;

/** Thrown inside a parser once MAX_ISSUES were collected, caught by `collectIssues`. */
class IssueCapReached extends Error {}

/** Located issues of one parse; `where` is `line:column`. */
export class IssueList {
  readonly issues: EngineIssue[] = [];

  /** Records an issue at a 1-based line and column; stops the parse after MAX_ISSUES. */
  add(line: number, column: number, message: string, hint?: string): void {
    this.issues.push({ where: `${line}:${column}`, line, column, message, ...(hint ? { hint } : {}) });
    if (this.issues.length >= MAX_ISSUES) throw new IssueCapReached();
  }

  /** Records an issue locateError by a path rather than a position. */
  addAt(where: string, message: string, hint?: string, line?: number, column?: number): void {
    this.issues.push({ where, message, ...(hint ? { hint } : {}), ...(line !== undefined ? { line } : {}), ...(column !== undefined ? { column } : {}) });
    if (this.issues.length >= MAX_ISSUES) throw new IssueCapReached();
  }

  /** True when nothing was recorded. */
  get empty(): boolean {
    return this.issues.length === 0;
  }

  /** Throws a FlowTableError carrying every recorded issue, if any. */
  throwIfAny(): void {
    if (this.issues.length) throw new FlowTableError(sortByPosition(this.issues));
  }
}

/**
 * Runs `body` with a fresh issue list. When `body` reached the issue cap, the list is closed
 * with a note and thrown; otherwise recorded issues are thrown after `body` returns.
 */
export function collectIssues<T>(body: (issues: IssueList) => T): T {
  const issues = new IssueList();
  let result: T;
  try {
    result = body(issues);
  } catch (e) {
    if (e instanceof IssueCapReached) {
      const last = issues.issues[issues.issues.length - 1]!;
      last.hint = `${last.hint ? `${last.hint}; ` : ''}stopped after ${MAX_ISSUES} problems`;
      throw new FlowTableError(sortByPosition(issues.issues));
    }
    throw e;
  }
  issues.throwIfAny();
  return result;
}

function sortByPosition(issues: EngineIssue[]): EngineIssue[] {
  return issues.every((i) => i.line !== undefined)
    ? [...issues].sort((a, b) => a.line! - b.line! || (a.column ?? 0) - (b.column ?? 0))
    : issues;
}

/** 1-based line and column (in UTF-16 units, as editors count) of an offset in `text`. */
export function offsetToLineColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let start = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    const ch = text.charCodeAt(i);
    if (ch === 10 || (ch === 13 && text.charCodeAt(i + 1) !== 10)) {
      line++;
      start = i + 1;
    }
  }
  return { line, column: offset - start + 1 };
}

/** Number of bytes `text` takes in UTF-8. */
export function countUtf8Bytes(text: string): number {
  let bytes = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c < 0x80) bytes += 1;
    else if (c < 0x800) bytes += 2;
    else if (c >= 0xd800 && c <= 0xdbff && i + 1 < text.length && (text.charCodeAt(i + 1) & 0xfc00) === 0xdc00) {
      bytes += 4;
      i++;
    } else bytes += 3;
  }
  return bytes;
}

function locateError(text: string, offset: number, message: string, hint: string): FlowTableError {
  const { line, column } = offsetToLineColumn(text, offset);
  return new FlowTableError([{ where: `${line}:${column}`, line, column, message, hint }]);
}

/**
 * Rejects sources that are too large or are not text: a NUL character or a U+FFFD replacement
 * character (what a decoder leaves for bytes that are not UTF-8) means binary data.
 */
export function checkSourceText(text: string): void {
  if (text.length > MAX_SOURCE_BYTES || countUtf8Bytes(text) > MAX_SOURCE_BYTES) {
    const size = countUtf8Bytes(text);
    throw new FlowTableError([
      {
        where: '1:1',
        line: 1,
        column: 1,
        message: `the source is ${(size / 1048576).toFixed(1)} MiB; the limit is ${MAX_SOURCE_BYTES / 1048576} MiB`,
        hint: 'split the table or use the compact `cells` form with cubes',
      },
    ]);
  }
  const nul = text.indexOf('\u0000');
  if (nul >= 0) throw locateError(text, nul, 'the source contains a NUL byte: this looks like a binary file, not a flow table', 'open a .qfl, .json, .kiss2 or .csv text file');
  const bad = text.indexOf('\ufffd');
  if (bad >= 0) throw locateError(text, bad, 'the source is not valid UTF-8 text (found a replacement character)', 'save the file as UTF-8');
}

/** Removes a leading byte-order mark. */
export function stripBom(text: string): string {
  return text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
}

/** Splits text into lines on LF, CRLF or a lone CR. */
export function splitLines(text: string): string[] {
  return text.split(/\r\n|\n|\r/);
}
