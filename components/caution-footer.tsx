/** The standing caution shown on every page (product rule 4). */
export function CautionFooter({ tone = 'light' }: { tone?: 'light' | 'dark' }) {
  const color = tone === 'dark' ? 'text-ink-300 border-ink-800' : 'text-ink-500 border-wafer-200';
  return (
    <footer className={`border-t px-6 py-3 text-xs leading-relaxed ${color}`} data-testid="caution">
      <span className="font-semibold text-copper-600">Caution:</span> Trenchant&apos;s etch depths and loading flags are
      model estimates. Validate them against your fab&apos;s process of record before changing a mask or a recipe;
      the foundry&apos;s design rules take precedence.
    </footer>
  );
}
