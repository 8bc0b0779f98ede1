'use client';

import { useEffect, useState } from 'react';
import { Card } from '@/components/ui/card';
import { CanvasViewer } from './canvas-viewer';
import { StaticPreview } from './static-preview';

/** WebGL 2 or 1 available? (pixi.js 8 needs one of them; headless Chromium has it through SwiftShader.) */
function webglAvailable(): boolean {
  if (typeof window !== 'undefined' && new URLSearchParams(window.location.search).get('viewer') === 'static') return false;
  try {
    const c = document.createElement('canvas');
    return Boolean(c.getContext('webgl2') ?? c.getContext('webgl'));
  } catch {
    return false;
  }
}

/**
 * The map section of the analysis page: the interactive canvas viewer when WebGL works, otherwise a notice and
 * the server-rendered PNG preview. The PNG stays reachable under the canvas either way.
 */
export function AnalysisCanvasSection({ analysisId }: { analysisId: string }) {
  const [gl, setGl] = useState<boolean | null>(null);
  const [failure, setFailure] = useState<string | null>(null);
  const [showStatic, setShowStatic] = useState(false);
  useEffect(() => setGl(webglAvailable()), []);
  const canvas = gl === true && !failure;
  return (
    <Card className="p-6">
      <div className="mb-3 flex flex-wrap items-center justify-between gap-3">
        <h2 className="text-lg font-semibold text-ink-900">Die map</h2>
        {canvas ? (
          <button type="button" className="text-xs text-ink-500 underline hover:text-ink-900" onClick={() => setShowStatic((s) => !s)} data-testid="toggle-static">
            {showStatic ? 'Hide static preview' : 'Static preview (PNG)'}
          </button>
        ) : null}
      </div>
      {gl === null ? <p className="text-sm text-ink-500">Starting the viewer…</p> : null}
      {gl === false || failure ? (
        <div className="space-y-3">
          <p role="status" className="rounded-md border border-warn/40 bg-warn/10 px-3 py-2 text-sm text-ink-800" data-testid="no-webgl">
            {failure ? `The interactive map could not start (${failure}).` : 'This browser has no WebGL, so the interactive map is not available.'} Below is a static
            preview of the result maps; the findings table lists every flag with its position.
          </p>
          <StaticPreview analysisId={analysisId} />
        </div>
      ) : null}
      {canvas ? <CanvasViewer analysisId={analysisId} onFailure={setFailure} /> : null}
      {canvas && showStatic ? (
        <div className="mt-4 border-t border-wafer-200 pt-4">
          <StaticPreview analysisId={analysisId} />
        </div>
      ) : null}
    </Card>
  );
}
