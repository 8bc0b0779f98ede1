'use client';

import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { FormAlert } from '@/components/ui/field';
import { ApiClientError, apiJson } from '@/components/pipeline/api-client';
import { parseProcessModel, type ProcessModel } from '@/lib/etch';
import { getPath, MODEL_BLOCKS, MODEL_PARAMETERS, setPath, type ParameterField } from '@/lib/models/parameters';

type Block = keyof typeof MODEL_BLOCKS;
const inputClass = (bad: boolean) =>
  `block w-full rounded-md border bg-white px-2.5 py-1.5 text-sm text-ink-900 shadow-xs focus:outline-none focus:ring-2 ${bad ? 'border-fail focus:ring-fail/30' : 'border-wafer-300 focus:border-copper-500 focus:ring-copper-400/30'}`;

function initialValues(doc: ProcessModel): Record<string, string> {
  const out: Record<string, string> = {};
  for (const f of MODEL_PARAMETERS) {
    const v = getPath(doc, f.path);
    out[f.path] = v === undefined || v === null ? '' : String(v);
  }
  return out;
}

/**
 * The document the form describes: form fields over the draft's document (keeping fields the form does not show,
 * such as the calibration record). A hand edit of a fitted parameter drops the covariance from the calibration
 * record, since it no longer describes these values.
 */
function buildDocument(base: ProcessModel, values: Record<string, string>, blocks: Record<Block, boolean>): Record<string, unknown> {
  let doc: Record<string, unknown> = { ...(base as unknown as Record<string, unknown>) };
  for (const b of Object.keys(MODEL_BLOCKS) as Block[]) if (!blocks[b]) delete doc[b];
  for (const f of MODEL_PARAMETERS) {
    if (f.block && !blocks[f.block]) continue;
    const raw = (values[f.path] ?? '').trim();
    const value = raw === '' ? undefined : f.type === 'number' ? Number(raw) : raw;
    doc = setPath(doc, f.path, value);
  }
  const cal = doc.calibration as ProcessModel['calibration'];
  if (cal?.parameters) {
    const current: Record<string, unknown> = { openRateUmPerMin: doc.openRateUmPerMin, reactionProbability: doc.reactionProbability, loadingCoefficient: (doc.loading as { coefficient?: unknown })?.coefficient };
    const edited = Object.entries(cal.parameters).some(([k, p]) => typeof current[k] === 'number' && Math.abs((current[k] as number) - p.value) > 1e-12 * Math.abs(p.value));
    if (edited) {
      const { covariance: _c, parameters: _p, ...rest } = cal;
      doc.calibration = rest;
    }
  }
  return doc;
}

/** Every parameter of a draft with its unit and explanation; errors from validation are shown at their field. */
export function DraftForm({ versionId, document }: { versionId: string; document: ProcessModel }) {
  const router = useRouter();
  const [values, setValues] = useState(() => initialValues(document));
  const [blocks, setBlocks] = useState<Record<Block, boolean>>({ ion: Boolean(document.ion), cyclic: Boolean(document.cyclic), mask: Boolean(document.mask), stopLayer: Boolean(document.stopLayer) });
  const [errors, setErrors] = useState<Record<string, string[]>>({});
  const [message, setMessage] = useState<{ text: string; tone: 'error' | 'success' } | undefined>();
  const [saving, setSaving] = useState(false);

  const save = async () => {
    setMessage(undefined);
    const doc = buildDocument(document, values, blocks);
    const local = parseProcessModel(doc);
    if (!local.ok) {
      const map: Record<string, string[]> = {};
      for (const i of local.issues) (map[i.path] ??= []).push(i.message);
      setErrors(map);
      setMessage({ text: `${local.issues.length} ${local.issues.length === 1 ? 'field needs' : 'fields need'} attention.`, tone: 'error' });
      return;
    }
    setErrors({});
    setSaving(true);
    try {
      await apiJson(`/api/v1/model-versions/${versionId}`, { method: 'PATCH', json: { document: doc } });
      setMessage({ text: 'Draft saved.', tone: 'success' });
      router.refresh();
    } catch (e) {
      if (e instanceof ApiClientError) {
        const map: Record<string, string[]> = {};
        for (const [k, v] of Object.entries(e.fieldErrors)) map[k.replace(/^document\./, '')] = v;
        setErrors(map);
        setMessage({ text: e.message, tone: 'error' });
      } else setMessage({ text: String(e), tone: 'error' });
    } finally {
      setSaving(false);
    }
  };

  const field = (f: ParameterField) => {
    const errs = Object.entries(errors).filter(([k]) => k === f.path || k.startsWith(`${f.path}.`)).flatMap(([, v]) => v);
    const id = `param-${f.path.replace(/\./g, '-')}`;
    const value = values[f.path] ?? '';
    const set = (v: string) => setValues({ ...values, [f.path]: v });
    return (
      <div key={f.path} className={`grid gap-x-4 gap-y-1 border-b border-wafer-100 py-2.5 ${f.type === 'text' ? 'sm:grid-cols-[14rem_1fr]' : 'sm:grid-cols-[14rem_14rem_1fr]'}`}>
        <label htmlFor={id} className="text-sm font-medium text-ink-800">
          {f.label}
          {f.required ? <span className="text-copper-600"> *</span> : null}
          <span className="block font-mono text-[10px] font-normal text-ink-500">{f.path}</span>
        </label>
        <div className="flex items-center gap-1.5">
          {f.type === 'choice' ? (
            <select id={id} className={inputClass(errs.length > 0)} value={value} onChange={(e) => set(e.target.value)}>
              {f.required ? null : <option value="">(default)</option>}
              {f.choices?.map((c) => (
                <option key={c} value={c}>
                  {c}
                </option>
              ))}
            </select>
          ) : (
            <input id={id} className={inputClass(errs.length > 0)} value={value} onChange={(e) => set(e.target.value)} inputMode={f.type === 'number' ? 'decimal' : undefined} aria-invalid={errs.length > 0 || undefined} aria-describedby={`${id}-help`} />
          )}
          <span className="w-12 shrink-0 text-xs text-ink-500">{f.unit}</span>
        </div>
        <div id={`${id}-help`} className={`text-xs text-ink-500 ${f.type === 'text' ? 'sm:col-start-2' : ''}`}>
          {f.help}
          {errs.length ? (
            <ul className="mt-0.5 text-fail" data-testid={`error-${f.path}`}>
              {errs.map((e) => (
                <li key={e}>{e}</li>
              ))}
            </ul>
          ) : null}
        </div>
      </div>
    );
  };

  const rootErrors = Object.entries(errors).filter(([k]) => !MODEL_PARAMETERS.some((f) => k === f.path || k.startsWith(`${f.path}.`))).flatMap(([k, v]) => v.map((m) => `${k}: ${m}`));
  return (
    <form
      className="space-y-4"
      data-testid="draft-form"
      onSubmit={(e) => {
        e.preventDefault();
        void save();
      }}
    >
      <div>{MODEL_PARAMETERS.filter((f) => !f.block).map(field)}</div>
      {(Object.keys(MODEL_BLOCKS) as Block[]).map((b) => (
        <fieldset key={b} className="rounded-md border border-wafer-200 px-4 py-2">
          <legend className="px-1">
            <label className="flex items-center gap-2 text-sm font-medium text-ink-800">
              <input type="checkbox" checked={blocks[b]} onChange={() => setBlocks({ ...blocks, [b]: !blocks[b] })} data-testid={`block-${b}`} />
              {MODEL_BLOCKS[b].label}
            </label>
          </legend>
          <p className="text-xs text-ink-500">{MODEL_BLOCKS[b].help}</p>
          {blocks[b] ? MODEL_PARAMETERS.filter((f) => f.block === b).map(field) : null}
        </fieldset>
      ))}
      {rootErrors.length ? <FormAlert message={rootErrors.join(' ')} /> : null}
      <FormAlert message={message?.text} tone={message?.tone} />
      <Button type="submit" disabled={saving} data-testid="save-draft">
        {saving ? 'Saving…' : 'Save draft'}
      </Button>
    </form>
  );
}
