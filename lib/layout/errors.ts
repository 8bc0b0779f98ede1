/**
 * The one error type every layout reader throws for bad input. `message` is a single line naming the problem and
 * where it is (byte offset for GDSII, line for CSV); `code` is a stable machine-readable tag.
 */
export type LayoutErrorCode =
  | 'empty'
  | 'not-gdsii'
  | 'truncated'
  | 'bad-record-length'
  | 'unknown-record'
  | 'bad-record'
  | 'bad-structure'
  | 'missing-xy'
  | 'missing-cell'
  | 'reference-cycle'
  | 'duplicate-cell'
  | 'no-top-cell'
  | 'too-large'
  | 'csv'
  | 'unknown-format'
  | 'aborted'
  | 'io';

/**
 * A problem the reader repaired instead of refusing the file (e.g. an unclosed BOUNDARY, closed implicitly). Readers
 * return these with the layout; the CLI prints them on stderr and uploads keep them, so no repair is silent.
 */
export interface LayoutWarning {
  code: 'unclosed-boundary' | 'more-warnings';
  message: string;
  offset?: number;
}

/** Readers keep at most this many warnings and then one line saying how many more there were. */
export const MAX_LAYOUT_WARNINGS = 100;

/** Append a warning, counting (not storing) those beyond MAX_LAYOUT_WARNINGS. */
export function pushWarning(list: LayoutWarning[], counter: { dropped: number }, w: LayoutWarning): void {
  if (list.length < MAX_LAYOUT_WARNINGS) list.push(w);
  else counter.dropped++;
}

export class LayoutReadError extends Error {
  readonly code: LayoutErrorCode;
  readonly offset?: number;
  readonly line?: number;

  constructor(code: LayoutErrorCode, message: string, where: { offset?: number; line?: number } = {}) {
    super(message.replace(/\s*\n\s*/g, ' '));
    this.name = 'LayoutReadError';
    this.code = code;
    if (where.offset !== undefined) this.offset = where.offset;
    if (where.line !== undefined) this.line = where.line;
  }
}
