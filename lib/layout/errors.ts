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
