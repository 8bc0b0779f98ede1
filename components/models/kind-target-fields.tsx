'use client';

/** The kind and target-depth fields the version page's derived tables (width rules, density limits) share. */
export function KindTargetFields(props: { kind: 'trench' | 'hole'; onKind: (k: 'trench' | 'hole') => void; target: string; onTarget: (t: string) => void; testIdPrefix: string }) {
  return (
    <>
      <label className="text-xs text-ink-700">
        Kind
        <select className="mt-0.5 block rounded-md border border-wafer-300 bg-white px-2 py-1.5 text-sm" value={props.kind} onChange={(e) => props.onKind(e.target.value as 'trench' | 'hole')} data-testid={`${props.testIdPrefix}-kind`}>
          <option value="trench">trench</option>
          <option value="hole">hole</option>
        </select>
      </label>
      <label className="text-xs text-ink-700">
        Target depth (µm)
        <input className="mt-0.5 block w-28 rounded-md border border-wafer-300 px-2 py-1.5 text-sm" value={props.target} onChange={(e) => props.onTarget(e.target.value)} inputMode="decimal" data-testid={`${props.testIdPrefix}-target`} />
      </label>
    </>
  );
}
