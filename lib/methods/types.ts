/**
 * The Methods documentation as typed data, so the app's Methods page, reports and the check command print the same
 * words. Pure data and pure functions: safe in server components, client components, workers and the CLI.
 */

/** How well established a source is (mirrors the tags in the project's domain notes). */
export type SourceStrength = 'published' | 'computed' | 'common-practice' | 'from-memory';

export interface MethodSource {
  /** Full citation, or a short description for common practice. */
  citation: string;
  strength: SourceStrength;
  /** What the source is used for, when not obvious. */
  note?: string;
}

export interface MethodFormula {
  /** What the formula gives, e.g. "Window density". */
  label: string;
  /** Plain text, Unicode maths (no TeX), e.g. "ρ(i,j) = A_open(window ∩ die) / A(window ∩ die)". */
  text: string;
  /** Symbols used, "symbol: meaning (unit)". */
  where?: string[];
}

export interface MethodSection {
  /** Stable anchor for links from reports and flags, e.g. "density-windows". */
  id: string;
  title: string;
  /** Paragraphs of plain text. */
  body: string[];
  formulas: MethodFormula[];
  sources: MethodSource[];
  subsections?: MethodSection[];
}
