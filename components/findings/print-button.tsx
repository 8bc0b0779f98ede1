'use client';

export function PrintButton() {
  return (
    <button type="button" onClick={() => window.print()} className="rounded-md bg-ink-900 px-3 py-1.5 whitespace-nowrap text-sm text-white print:hidden" data-testid="print-report">
      Print or save as PDF
    </button>
  );
}
