import type { ProcessModel } from '@/lib/etch';
import { getPath, MODEL_BLOCKS, MODEL_PARAMETERS } from '@/lib/models/parameters';

/** Read-only list of every parameter of a version, with unit and explanation (blocks left out when absent). */
export function ParameterTable({ document }: { document: ProcessModel }) {
  // Name and description are shown in the page header, not as parameters.
  const rows = MODEL_PARAMETERS.filter((f) => f.path !== 'name' && f.path !== 'description' && (!f.block || (document as Record<string, unknown>)[f.block] !== undefined));
  const fitted = document.calibration?.parameters ?? {};
  const fittedPath: Record<string, string> = { openRateUmPerMin: 'openRateUmPerMin', reactionProbability: 'reactionProbability', loadingCoefficient: 'loading.coefficient' };
  const se = Object.fromEntries(Object.entries(fitted).map(([k, v]) => [fittedPath[k] ?? k, v.standardError]));
  return (
    <table className="w-full table-fixed text-sm" data-testid="parameter-table">
      <colgroup>
        <col className="w-56" />
        <col className="w-36" />
        <col className="w-20" />
        <col />
      </colgroup>
      <thead>
        <tr className="border-b border-wafer-200 text-left text-xs text-ink-500">
          <th className="py-1.5 pr-3 font-medium">Parameter</th>
          <th className="py-1.5 pr-3 text-right font-medium">Value</th>
          <th className="py-1.5 pr-3 font-medium">Unit</th>
          <th className="py-1.5 font-medium">Meaning</th>
        </tr>
      </thead>
      <tbody>
        {rows.map((f) => {
          const v = getPath(document, f.path);
          const s = se[f.path];
          return (
            <tr key={f.path} className="border-b border-wafer-100 align-top">
              <td className="py-1.5 pr-3 text-ink-800">
                {f.label}
                {f.block ? <span className="block text-[10px] text-ink-500">{MODEL_BLOCKS[f.block].label}</span> : null}
              </td>
              <td className="py-1.5 pr-3 text-right font-mono whitespace-nowrap">
                {v === undefined ? <span className="text-ink-300">—</span> : typeof v === 'number' ? String(Number(v.toPrecision(6))) : String(v)}
                {typeof s === 'number' ? <span className="block text-[11px] text-ink-500">± {Number(s.toPrecision(2))} (fit)</span> : null}
              </td>
              <td className="py-1.5 pr-3 text-xs text-ink-500">{f.unit}</td>
              <td className="py-1.5 text-xs text-ink-500">{f.help}</td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}
