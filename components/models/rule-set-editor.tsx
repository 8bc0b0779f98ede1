'use client';

import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { Button } from '@/components/ui/button';
import { Field, FormAlert } from '@/components/ui/field';
import { ApiClientError, apiJson } from '@/components/pipeline/api-client';
import type { RuleSetRules } from '@/lib/models/rule-set-schema';
import { ruleSetRulesSchema } from '@/lib/models/rule-set-schema';

type Props = { teamId: string; ruleSet?: { id: string; name: string; description: string; rules: RuleSetRules; isDefault: boolean } };

const pctText = (v: number | null) => (v === null ? '' : `${Number((v * 100).toPrecision(4))}%`);
const numText = (v: number | null) => (v === null ? '' : String(v));
/** "" → null; "20%" or "20" (> 1) → 0.2; "0.2" → 0.2. */
function fraction(t: string): number | null {
  const s = t.trim();
  if (!s) return null;
  const n = Number(s.replace(/%$/, ''));
  return s.endsWith('%') || n > 1 ? n / 100 : n;
}
const num = (t: string) => (t.trim() ? Number(t.trim()) : null);

/** Create or edit a rule set: windows, kernel and limits, validated with the same rules as analysis settings. */
export function RuleSetEditor({ teamId, ruleSet }: Props) {
  const router = useRouter();
  const r = ruleSet?.rules;
  const [name, setName] = useState(ruleSet?.name ?? '');
  const [description, setDescription] = useState(ruleSet?.description ?? '');
  const [isDefault, setIsDefault] = useState(ruleSet?.isDefault ?? false);
  const [windows, setWindows] = useState(r ? r.densityWindows.map((w) => `${w.windowUm}/${w.stepUm}`).join(' ') : '100/50 700/70');
  const [edge, setEdge] = useState<'full' | 'clipped'>(r?.windowEdge ?? 'clipped');
  const [f, setF] = useState<Record<string, string>>({
    kernelUm: numText(r?.kernel.lengthUm ?? null),
    minDensity: pctText(r?.limits.minDensity ?? null),
    maxDensity: pctText(r?.limits.maxDensity ?? null),
    maxGradient: pctText(r?.limits.maxGradient ?? null),
    maxAr: numText(r?.limits.maxAspectRatio ?? null),
    minWidthUm: numText(r?.limits.minWidthUm ?? null),
    stopBudgetUm: numText(r?.limits.stopOverEtchBudgetUm ?? null),
  });
  const [errors, setErrors] = useState<Record<string, string[]>>({});
  const [message, setMessage] = useState<{ text: string; tone: 'error' | 'success' } | undefined>();
  const [busy, setBusy] = useState(false);

  const build = () => {
    const parts = windows.split(/[,;\s]+/).filter(Boolean);
    const densityWindows = parts.map((p) => {
      const m = /^(\d+(?:\.\d+)?)\/(\d+(?:\.\d+)?)$/.exec(p);
      return m ? { windowUm: Number(m[1]), stepUm: Number(m[2]) } : { windowUm: NaN, stepUm: NaN };
    });
    return {
      densityWindows,
      windowEdge: edge,
      kernel: { kind: r?.kernel.kind ?? null, lengthUm: num(f.kernelUm ?? ''), outside: r?.kernel.outside ?? 'empty' },
      limits: {
        minDensity: fraction(f.minDensity ?? ''),
        maxDensity: fraction(f.maxDensity ?? ''),
        maxGradient: fraction(f.maxGradient ?? ''),
        maxAspectRatio: num(f.maxAr ?? ''),
        targetDepthUm: r?.limits.targetDepthUm ?? null,
        toleranceUm: r?.limits.toleranceUm ?? null,
        stopOverEtchBudgetUm: num(f.stopBudgetUm ?? ''),
        minWidthUm: num(f.minWidthUm ?? ''),
      },
      severities: r?.severities ?? {},
    };
  };

  const save = async () => {
    setMessage(undefined);
    const rules = build();
    const local = ruleSetRulesSchema.safeParse(rules);
    const map: Record<string, string[]> = {};
    if (!name.trim()) map.name = ['Give the rule set a name.'];
    const badWindow = windows.split(/[,;\s]+/).filter(Boolean).find((p) => !/^\d+(?:\.\d+)?\/\d+(?:\.\d+)?$/.test(p));
    if (badWindow !== undefined) map['rules.densityWindows'] = [`"${badWindow}" is not window/step in µm, e.g. 100/50`];
    else if (!local.success) for (const i of local.error.issues) (map[['rules', ...i.path.map(String)].join('.')] ??= []).push(i.message);
    setErrors(map);
    if (Object.keys(map).length) {
      setMessage({ text: 'Some fields need attention.', tone: 'error' });
      return;
    }
    setBusy(true);
    try {
      const body = { name, description, rules, isDefault };
      if (ruleSet) await apiJson(`/api/v1/rule-sets/${ruleSet.id}`, { method: 'PATCH', json: body });
      else await apiJson(`/api/v1/teams/${teamId}/rule-sets`, { method: 'POST', json: body });
      setMessage({ text: 'Saved. New analyses that pick this rule set use these rules; finished analyses keep the settings they ran with.', tone: 'success' });
      router.refresh();
    } catch (e) {
      if (e instanceof ApiClientError) {
        setErrors(e.fieldErrors);
        setMessage({ text: e.message, tone: 'error' });
      } else setMessage({ text: String(e), tone: 'error' });
    } finally {
      setBusy(false);
    }
  };
  const err = (key: string) => {
    const list = Object.entries(errors).filter(([k]) => k === key || k.startsWith(`${key}.`)).flatMap(([, v]) => v);
    return list.length ? list : undefined;
  };
  const limit = (key: string, label: string, path: string, hint: string) => <Field label={label} name={`${ruleSet?.id ?? 'new'}-${key}`} value={f[key] ?? ''} onChange={(e) => setF({ ...f, [key]: e.target.value })} errors={err(path)} hint={hint} inputMode="decimal" />;

  return (
    <form
      className="space-y-4"
      data-testid={ruleSet ? `rule-set-form-${ruleSet.id}` : 'rule-set-form-new'}
      onSubmit={(e) => {
        e.preventDefault();
        void save();
      }}
    >
      <div className="grid gap-4 sm:grid-cols-2">
        <Field label="Name" name={`${ruleSet?.id ?? 'new'}-name`} value={name} onChange={(e) => setName(e.target.value)} errors={err('name')} />
        <Field label="Description" name={`${ruleSet?.id ?? 'new'}-description`} value={description} onChange={(e) => setDescription(e.target.value)} hint="Where the limits come from (rule manual section, revision)." />
        <Field label="Density windows (window/step, µm)" name={`${ruleSet?.id ?? 'new'}-windows`} value={windows} onChange={(e) => setWindows(e.target.value)} errors={err('rules.densityWindows')} hint="e.g. 100/50 700/70 — your rule manual's windows" />
        <div className="space-y-1.5">
          <label className="block text-sm font-medium text-ink-800" htmlFor={`${ruleSet?.id ?? 'new'}-edge`}>
            Edge windows
          </label>
          <select id={`${ruleSet?.id ?? 'new'}-edge`} className="block w-full rounded-md border border-wafer-300 bg-white px-3 py-2 text-sm" value={edge} onChange={(e) => setEdge(e.target.value as 'full' | 'clipped')}>
            <option value="clipped">clipped to the die, divided by the clipped area</option>
            <option value="full">only windows fully inside the die</option>
          </select>
        </div>
      </div>
      <div className="grid gap-4 sm:grid-cols-3">
        {limit('minDensity', 'Min window density', 'rules.limits.minDensity', 'e.g. 5% — blank: not checked')}
        {limit('maxDensity', 'Max window density', 'rules.limits.maxDensity', 'e.g. 60% — blank: not checked')}
        {limit('maxGradient', 'Max density step', 'rules.limits.maxGradient', 'between neighbouring windows')}
        {limit('minWidthUm', 'Min opening width (µm)', 'rules.limits.minWidthUm', 'blank: not checked')}
        {limit('maxAr', 'Max aspect ratio', 'rules.limits.maxAspectRatio', "blank: the model's")}
        {limit('kernelUm', 'Kernel length L (µm)', 'rules.kernel', "blank: the model's loading length")}
        {limit('stopBudgetUm', 'Stop-layer over-etch budget (µm)', 'rules.limits.stopOverEtchBudgetUm', 'blank: not checked')}
      </div>
      <label className="flex items-center gap-2 text-sm text-ink-800">
        <input type="checkbox" checked={isDefault} onChange={() => setIsDefault(!isDefault)} /> Default for new analyses in this team
      </label>
      <FormAlert message={message?.text} tone={message?.tone} />
      <div className="flex gap-2">
        <Button type="submit" disabled={busy}>
          {busy ? 'Saving…' : ruleSet ? 'Save changes' : 'Create rule set'}
        </Button>
        {ruleSet ? (
          <Button
            type="button"
            variant="danger"
            disabled={busy}
            onClick={async () => {
              if (!window.confirm(`Archive "${ruleSet.name}"? It is no longer offered for new analyses; finished analyses keep their settings.`)) return;
              await apiJson(`/api/v1/rule-sets/${ruleSet.id}`, { method: 'PATCH', json: { archived: true } });
              router.refresh();
            }}
          >
            Archive
          </Button>
        ) : null}
      </div>
    </form>
  );
}
