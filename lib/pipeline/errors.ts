/**
 * Errors the pipeline throws on purpose. Both carry a one-line message fit to show a user as is.
 * - AnalysisInputError: the input cannot be analysed as asked (unknown layer, empty layout, grid too big...).
 *   The CLI maps it to exit code 2; the job runner marks the analysis failed with the message.
 * - AnalysisAbortedError: the caller's AbortSignal fired; `name` is 'AbortError' like DOM aborts, so generic
 *   `err.name === 'AbortError'` checks (piscina, fetch-style code) recognise it.
 */
export type AnalysisInputErrorCode = 'unknown-layer' | 'empty-layout' | 'too-many-pixels' | 'bad-settings';

export class AnalysisInputError extends Error {
  constructor(
    readonly code: AnalysisInputErrorCode,
    message: string,
  ) {
    super(message);
    this.name = 'AnalysisInputError';
  }
}

export class AnalysisAbortedError extends Error {
  readonly code = 'ABORT_ERR';
  constructor(readonly stage: string) {
    super(`analysis cancelled during stage "${stage}"`);
    this.name = 'AbortError';
  }
}

export function isAbortError(err: unknown): boolean {
  return err instanceof Error && err.name === 'AbortError';
}
