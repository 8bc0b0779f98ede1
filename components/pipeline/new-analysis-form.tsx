'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { parseAnalysisSettings } from '@/lib/pipeline/settings';
import { ApiClientError, apiJson } from './api-client';
import { QueryProvider } from './query-provider';

type RevisionChoice = { id: string; label: string; layers: { layer: number; datatype: number; polygons: number }[]; bboxUm: [number, number, number, number] | null };
/** `group` sorts the choice under the team's published versions or the built-in (invented, uncalibrated) samples. */
type ModelChoice = {
  id: string;
  name: string;
  version: string;
  description: string;
  targetDepthUm: number;
  toleranceUm: number;
  maxAspectRatio: number;
  loadingLengthUm: number;
  group: 'published' | 'sample';
  calibrationDate?: string | null;
};
/** A saved rule set: its windows, kernel and limits fill the form and are applied by the server (ruleSetId). */
type RuleSetChoice = {
  id: string;
  name: string;
  description: string;
  isDefault: boolean;
  rules: {
    densityWindows: { windowUm: number; stepUm: number }[];
    kernel: { lengthUm: number | null };
    limits: { minDensity: number | null; maxDensity: number | null; maxGradient: number | null; maxAspectRatio: number | null; stopOverEtchBudgetUm: number | null; minWidthUm: number | null };
  };
};
type Props = {
  projectId: string;
  revisions: RevisionChoice[];
  initialRevisionId: string;
  models: ModelChoice[];
  /** Preselected model (chosen for the project's etch kind, see lib/models/defaults.ts). */
  defaultModelId?: string | null;
  /** Why that model is preselected, shown under the select. */
  defaultModelReason?: string;
  ruleSets?: RuleSetChoice[];
};

export function NewAnalysisForm(props: Props) {
  return (
    <QueryProvider>
      <Form {...props} />
    </QueryProvider>
  );
}

const selectClass = 'block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm text-ink-900 shadow-xs focus:border-copper-500 focus:outline-none focus:ring-2 focus:ring-copper-400/30';

/** "" → null; "20%" → 0.2 when `percent`; other text → number (NaN when not a number, so validation names it). */
function num(text: string, percent = false): number | null {
  const t = text.trim();
  if (t === '') return null;
  if (percent) return t.endsWith('%') ? Number(t.slice(0, -1)) / 100 : Number(t) > 1 ? Number(t) / 100 : Number(t);
  return Number(t);
}

function parseWindows(text: string): { windowUm: number; stepUm: number }[] | string {
  const parts = text.split(/[,;\s]+/).filter(Boolean);
  const out: { windowUm: number; stepUm: number }[] = [];
  for (const p of parts) {
    const m = /^(\d+(?:\.\d+)?)\/(\d+(?:\.\d+)?)$/.exec(p);
    if (!m) return `"${p}" is not window/step in µm, e.g. 100/50`;
    out.push({ windowUm: Number(m[1]), stepUm: Number(m[2]) });
  }
  return out;
}

const pctText = (v: number | null) => (v === null ? '' : `${Number((v * 100).toPrecision(4))}%`);
const numText = (v: number | null) => (v === null ? '' : String(v));

function Form({ projectId, revisions, initialRevisionId, models, defaultModelId, defaultModelReason, ruleSets = [] }: Props) {
  const router = useRouter();
  const [revisionId, setRevisionId] = useState(initialRevisionId);
  const revision = revisions.find((r) => r.id === revisionId);
  const [layers, setLayers] = useState<string[]>(() => {
    const first = revisions.find((r) => r.id === initialRevisionId)?.layers.find((l) => l.layer !== 0) ?? revisions[0]?.layers[0];
    return first ? [`${first.layer}/${first.datatype}`] : [];
  });
  const [polarity, setPolarity] = useState<'clear' | 'dark'>('clear');
  const [modelId, setModelId] = useState(defaultModelId && models.some((m) => m.id === defaultModelId) ? defaultModelId : (models[0]?.id ?? 'upload'));
  const [modelText, setModelText] = useState<{ name: string; json: unknown } | null>(null);
  const [ruleSetId, setRuleSetId] = useState<string>(() => ruleSets.find((r) => r.isDefault)?.id ?? ruleSets[0]?.id ?? '');
  const ruleSet = ruleSets.find((r) => r.id === ruleSetId);
  const [windows, setWindows] = useState(() => (ruleSet ? ruleSet.rules.densityWindows.map((w) => `${w.windowUm}/${w.stepUm}`).join(' ') : '100/50 700/70'));
  const [f, setF] = useState<Record<string, string>>(() => ({ ...fromRuleSet(ruleSet), targetUm: '', toleranceUm: '' }));
  const pickRuleSet = (id: string) => {
    setRuleSetId(id);
    const r = ruleSets.find((x) => x.id === id);
    if (r) {
      setWindows(r.rules.densityWindows.map((w) => `${w.windowUm}/${w.stepUm}`).join(' '));
      setF({ ...f, ...fromRuleSet(r) });
    }
  };
  const locked = Boolean(ruleSet);
  const [errors, setErrors] = useState<Record<string, string[]>>({});
  const [formError, setFormError] = useState<string | undefined>();
  const model = models.find((m) => m.id === modelId);

  const buildSettings = () => {
    const w = parseWindows(windows);
    return {
      windowsError: typeof w === 'string' ? w : null,
      settings: {
        etchLayers: layers.map((l) => {
          const [layer, datatype] = l.split('/').map(Number);
          return { layer, datatype };
        }),
        polarity,
        densityWindows: typeof w === 'string' ? [] : w,
        kernel: { lengthUm: num(f.kernelUm ?? '') },
        limits: {
          minDensity: num(f.minDensity ?? '', true),
          maxDensity: num(f.maxDensity ?? '', true),
          maxGradient: num(f.maxGradient ?? '', true),
          maxAspectRatio: num(f.maxAr ?? ''),
          targetDepthUm: num(f.targetUm ?? ''),
          toleranceUm: num(f.toleranceUm ?? ''),
          stopOverEtchBudgetUm: num(f.stopBudgetUm ?? ''),
          minWidthUm: num(f.minWidthUm ?? ''),
        },
      },
    };
  };

  const create = useMutation({
    mutationFn: (body: unknown) => apiJson<{ analysis: { id: string } }>(`/api/v1/projects/${projectId}/analyses`, { method: 'POST', json: body }),
    onSuccess: (r) => router.push(`/analyses/${r.analysis.id}`),
    onError: (e) => {
      if (e instanceof ApiClientError) {
        setErrors(e.fieldErrors);
        setFormError(e.message);
      } else setFormError(e.message);
    },
  });

  const submit = () => {
    setFormError(undefined);
    const { settings, windowsError } = buildSettings();
    const local: Record<string, string[]> = {};
    if (windowsError) local['settings.densityWindows'] = [windowsError];
    const parsed = parseAnalysisSettings(settings);
    if (!parsed.ok) for (const i of parsed.issues) (local[`settings.${i.path}`] ??= []).push(i.message);
    if (modelId === 'upload' && !modelText) local.model = ['Choose a process model JSON file.'];
    setErrors(local);
    if (Object.keys(local).length > 0) {
      setFormError('Some fields need attention.');
      return;
    }
    create.mutate({ revisionId, settings, ...(modelId === 'upload' ? { model: modelText?.json } : { modelId }), ...(ruleSet ? { ruleSetId: ruleSet.id } : {}) });
  };

  const err = (key: string) => Object.entries(errors).filter(([k]) => k === key || k.startsWith(`${key}.`)).flatMap(([, v]) => v);
  // `blank` says what an empty field means when it comes from the rule set (not checked, or the model's value).
  const limitField = (key: string, label: string, path: string, hint: string, fromRules = true, blank = 'not checked') => (
    <Field
      label={label}
      name={key}
      value={f[key] ?? ''}
      onChange={(e) => setF({ ...f, [key]: e.target.value })}
      errors={err(path).length ? err(path) : undefined}
      hint={locked && fromRules ? `from the rule set${f[key] ? '' : ` — ${blank}`}` : hint}
      inputMode="decimal"
      readOnly={locked && fromRules}
    />
  );

  return (
    <form
      className="space-y-6 [&_input[readonly]]:bg-wafer-100 [&_input[readonly]]:text-ink-700"
      data-testid="new-analysis-form"
      onSubmit={(e) => {
        e.preventDefault();
        submit();
      }}
    >
      <div className="space-y-1.5">
        <label htmlFor="revision" className="block text-sm font-medium text-ink-800">Layout revision</label>
        <select id="revision" className={selectClass} value={revisionId} onChange={(e) => setRevisionId(e.target.value)}>
          {revisions.map((r) => (
            <option key={r.id} value={r.id}>{r.label}</option>
          ))}
        </select>
        {err('revisionId').length ? <p className="text-xs text-fail">{err('revisionId').join(' ')}</p> : null}
      </div>

      <fieldset className="space-y-2">
        <legend className="text-sm font-medium text-ink-800">Etch layers</legend>
        <p className="text-xs text-ink-500">Shapes on the chosen layers are merged into one etch mask.</p>
        <div className="flex flex-wrap gap-2" data-testid="layer-picker">
          {revision?.layers.map((l) => {
            const key = `${l.layer}/${l.datatype}`;
            const on = layers.includes(key);
            return (
              <label key={key} className={`flex cursor-pointer items-center gap-2 rounded-md px-2.5 py-1.5 text-sm ring-1 ${on ? 'bg-copper-400/15 ring-copper-500/50' : 'bg-white ring-wafer-300'}`}>
                <input type="checkbox" checked={on} onChange={() => setLayers(on ? layers.filter((x) => x !== key) : [...layers, key])} />
                <span className="font-mono">{key}</span>
                <span className="text-xs text-ink-500">{l.polygons.toLocaleString('en')} {l.polygons === 1 ? 'polygon' : 'polygons'}</span>
              </label>
            );
          })}
        </div>
        {err('settings.etchLayers').length ? <p className="text-xs text-fail" data-testid="error-layers">{err('settings.etchLayers').join(' ')}</p> : null}
      </fieldset>

      <div className="grid gap-4 sm:grid-cols-2">
        <div className="space-y-1.5">
          <label htmlFor="polarity" className="block text-sm font-medium text-ink-800">Polarity</label>
          <select id="polarity" className={selectClass} value={polarity} onChange={(e) => setPolarity(e.target.value as 'clear' | 'dark')}>
            <option value="clear">clear — drawn shapes are the openings</option>
            <option value="dark">dark — everything except the shapes is open</option>
          </select>
        </div>
        <div className="space-y-1.5">
          <label htmlFor="model" className="block text-sm font-medium text-ink-800">Process model</label>
          <select id="model" className={selectClass} value={modelId} onChange={(e) => setModelId(e.target.value)}>
            {models.some((m) => m.group === 'published') ? (
              <optgroup label="Published versions of your team">
                {models.filter((m) => m.group === 'published').map((m) => (
                  <option key={m.id} value={m.id}>{m.name} {m.version}{m.calibrationDate ? ` — calibrated ${m.calibrationDate}` : ' — uncalibrated'}</option>
                ))}
              </optgroup>
            ) : null}
            {models.some((m) => m.group === 'sample') ? (
              <optgroup label="Built-in samples (invented, uncalibrated)">
                {models.filter((m) => m.group === 'sample').map((m) => (
                  <option key={m.id} value={m.id}>{m.name} ({m.version})</option>
                ))}
              </optgroup>
            ) : null}
            <option value="upload">Upload a model JSON…</option>
          </select>
          {modelId === defaultModelId && defaultModelReason ? <p className="text-xs text-oxide-600" data-testid="model-default-reason">{defaultModelReason}</p> : null}
          {modelId === 'upload' ? (
            <input
              type="file"
              accept="application/json,.json"
              className="block text-xs"
              data-testid="model-file"
              onChange={async (e) => {
                const file = e.target.files?.[0];
                if (!file) return;
                try {
                  setModelText({ name: file.name, json: JSON.parse(await file.text()) });
                  setErrors({ ...errors, model: [] });
                } catch {
                  setModelText(null);
                  setErrors({ ...errors, model: [`${file.name} is not valid JSON.`] });
                }
              }}
            />
          ) : model ? (
            <p className="text-xs text-ink-500">{model.description || `target ${model.targetDepthUm} µm`}</p>
          ) : null}
          {err('model').length ? <ul className="text-xs text-fail">{err('model').map((m) => <li key={m}>{m}</li>)}</ul> : null}
          {err('modelId').length ? <p className="text-xs text-fail">{err('modelId').join(' ')}</p> : null}
        </div>
      </div>

      <div className="space-y-1.5">
        <label htmlFor="rule-set" className="block text-sm font-medium text-ink-800">Rule set</label>
        <select id="rule-set" className={selectClass} value={ruleSetId} onChange={(e) => pickRuleSet(e.target.value)} data-testid="rule-set-select">
          {ruleSets.map((r) => (
            <option key={r.id} value={r.id}>{r.name}{r.isDefault ? ' (team default)' : ''}</option>
          ))}
          <option value="">Custom limits (type them below)</option>
        </select>
        <p className="text-xs text-ink-500">
          {ruleSet ? ruleSet.description || 'Windows, kernel and limits come from this rule set.' : 'Blank density and width limits are not checked.'}{' '}
          <a href="/rule-sets" className="text-copper-600 hover:underline">Rule sets</a>
        </p>
        {err('ruleSetId').length ? <p className="text-xs text-fail">{err('ruleSetId').join(' ')}</p> : null}
      </div>

      <div className="grid gap-4 sm:grid-cols-2">
        <Field label="Density windows (window/step, µm)" name="windows" value={windows} onChange={(e) => setWindows(e.target.value)} errors={err('settings.densityWindows').length ? err('settings.densityWindows') : undefined} hint={locked ? 'from the rule set' : "e.g. 100/50 700/70 — use your rule manual's windows"} readOnly={locked} />
        {limitField('kernelUm', 'Kernel length L (µm)', 'settings.kernel', model ? `blank = the model's ${model.loadingLengthUm} µm` : 'blank = the model’s loading length', true, model ? `the model's ${model.loadingLengthUm} µm` : "the model's loading length")}
      </div>

      <fieldset className="space-y-3">
        <legend className="text-sm font-medium text-ink-800">Flag limits</legend>
        <p className="text-xs text-ink-500">
          {locked ? 'Density, width and aspect-ratio limits come from the rule set (choose “Custom limits” to type your own). ' : 'Blank density and width limits are not checked. '}
          Blank depth limits come from the model. Densities as fractions or percent (20%).
        </p>
        <div className="grid gap-4 sm:grid-cols-3">
          {limitField('minDensity', 'Min window density', 'settings.limits.minDensity', 'e.g. 20%')}
          {limitField('maxDensity', 'Max window density', 'settings.limits.maxDensity', 'e.g. 80%')}
          {limitField('maxGradient', 'Max density step', 'settings.limits.maxGradient', 'between neighbouring windows')}
          {limitField('maxAr', 'Max aspect ratio', 'settings.limits.maxAspectRatio', model ? `model: ${model.maxAspectRatio}` : '', true, model ? `the model's ${model.maxAspectRatio}` : "the model's")}
          {limitField('targetUm', 'Target depth (µm)', 'settings.limits.targetDepthUm', model ? `model: ${model.targetDepthUm} µm` : '', false)}
          {limitField('toleranceUm', 'Tolerance (µm)', 'settings.limits.toleranceUm', model ? `model: ±${model.toleranceUm} µm` : '', false)}
          {limitField('stopBudgetUm', 'Stop-layer over-etch budget (µm)', 'settings.limits.stopOverEtchBudgetUm', 'blank = not checked')}
          {limitField('minWidthUm', 'Min opening width (µm)', 'settings.limits.minWidthUm', 'rule minimum')}
        </div>
      </fieldset>

      <FormAlert message={formError} />
      <Button type="submit" disabled={create.isPending} data-testid="start-analysis">
        {create.isPending ? 'Starting…' : 'Start analysis'}
      </Button>
    </form>
  );
}

/** Form fields (percent for densities) from a rule set; all blank without one. */
function fromRuleSet(r: RuleSetChoice | undefined): Record<string, string> {
  const l = r?.rules.limits;
  return {
    kernelUm: numText(r?.rules.kernel.lengthUm ?? null),
    minDensity: pctText(l?.minDensity ?? null),
    maxDensity: pctText(l?.maxDensity ?? null),
    maxGradient: pctText(l?.maxGradient ?? null),
    maxAr: numText(l?.maxAspectRatio ?? null),
    stopBudgetUm: numText(l?.stopOverEtchBudgetUm ?? null),
    minWidthUm: numText(l?.minWidthUm ?? null),
  };
}

export type { RevisionChoice, ModelChoice, RuleSetChoice };
