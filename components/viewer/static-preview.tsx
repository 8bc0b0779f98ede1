'use client';

import { useState } from 'react';

/** The server-rendered PNG of one map: the view without WebGL, and a quick look that needs no scripts on the canvas. */
export function StaticPreview({ analysisId }: { analysisId: string }) {
  const [preview, setPreview] = useState('risk');
  return (
    <div data-testid="static-preview-block">
      <div className="mb-2 flex flex-wrap gap-1" role="tablist" aria-label="static preview map">
        {['risk', 'predicted-depth', 'effective-density', 'coverage'].map((m) => (
          <button key={m} role="tab" aria-selected={preview === m} onClick={() => setPreview(m)} className={`rounded px-2 py-1 text-xs ${preview === m ? 'bg-ink-900 text-wafer-50' : 'text-ink-700 hover:bg-wafer-200/60'}`}>
            {m}
          </button>
        ))}
      </div>
      {/* eslint-disable-next-line @next/next/no-img-element -- a generated PNG from the API, not a static asset */}
      <img src={`/api/v1/analyses/${analysisId}/preview.png?map=${preview}&size=640`} alt={`${preview} map of the die, top = +y`} width={640} height={640} className="mx-auto aspect-square w-full max-w-[640px] rounded border border-wafer-200 bg-wafer-100 object-contain" data-testid="preview" />
      <p className="mt-2 text-center text-xs text-ink-500">
        {preview === 'risk' ? 'Risk: pale = well inside the limits, amber = within 20 % of a limit, red = at or beyond a limit.' : 'Colour from the map minimum (pale) to maximum (dark).'} North is +y.
      </p>
    </div>
  );
}
