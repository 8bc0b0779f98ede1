/** Plain-text rendering of the Methods sections (for the CLI `--methods` output and text reports). */
import { METHOD_SECTIONS } from './sections';
import type { MethodSection } from './types';

const STRENGTH_WORDS = {
  published: 'published',
  computed: 'computed here, checked by two independent methods',
  'common-practice': 'common practice, no single source',
  'from-memory': 'citation from memory, to be verified',
} as const;

function render(s: MethodSection, depth: number, out: string[]): void {
  out.push(`${'#'.repeat(depth)} ${s.title}`, '');
  for (const p of s.body) out.push(p, '');
  for (const f of s.formulas) {
    out.push(`  ${f.label}: ${f.text}`);
    for (const w of f.where ?? []) out.push(`    ${w}`);
  }
  if (s.formulas.length) out.push('');
  if (s.sources.length) {
    out.push('Sources:');
    for (const src of s.sources) out.push(`  - ${src.citation} [${STRENGTH_WORDS[src.strength]}]${src.note ? ` — ${src.note}` : ''}`);
    out.push('');
  }
  for (const sub of s.subsections ?? []) render(sub, depth + 1, out);
}

export function methodsAsText(sections: readonly MethodSection[] = METHOD_SECTIONS): string {
  const out: string[] = [];
  for (const s of sections) render(s, 2, out);
  return out.join('\n').trimEnd() + '\n';
}
