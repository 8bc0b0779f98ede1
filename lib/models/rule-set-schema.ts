/**
 * The rules a saved rule set holds: the density windows, kernel, limits and severities of an analysis's settings
 * (the same fields and validation as lib/pipeline/settings.ts). Pure module (used by the form and the server).
 */
import { z } from 'zod';
import { analysisSettingsSchema, type AnalysisSettingsInput } from '@/lib/pipeline/settings';

export const ruleSetRulesSchema = analysisSettingsSchema.pick({ densityWindows: true, windowEdge: true, kernel: true, limits: true, severities: true }).strict();
export type RuleSetRules = z.infer<typeof ruleSetRulesSchema>;
export type RuleSetRulesInput = z.input<typeof ruleSetRulesSchema>;

export const ruleSetBody = z.strictObject({
  name: z.string().trim().min(1, 'Give the rule set a name.').max(120, 'Keep the name under 120 characters.'),
  description: z.string().max(2000, 'Keep the description under 2,000 characters.').default(''),
  rules: z.record(z.string(), z.unknown(), { error: 'rules must be a JSON object.' }),
  isDefault: z.boolean().default(false),
});
export type RuleSetBody = z.infer<typeof ruleSetBody>;
export const ruleSetPatchBody = ruleSetBody.partial().extend({ archived: z.boolean().optional() }).strict();

/**
 * Settings of an analysis that uses a rule set: the rule set's windows, edge policy, kernel, limits and severities
 * replace the request's (the rule set is the authority), the request keeps layers, polarity, origin and pixel;
 * a target depth or tolerance the request gives (the model's otherwise) is kept when the rule set leaves it open.
 */
export function applyRuleSet(settings: Record<string, unknown>, rules: RuleSetRules): AnalysisSettingsInput {
  const given = (settings.limits ?? {}) as Record<string, unknown>;
  return {
    ...(settings as AnalysisSettingsInput),
    densityWindows: rules.densityWindows,
    windowEdge: rules.windowEdge,
    kernel: rules.kernel,
    limits: {
      ...rules.limits,
      targetDepthUm: rules.limits.targetDepthUm ?? (given.targetDepthUm as number | null | undefined) ?? null,
      toleranceUm: rules.limits.toleranceUm ?? (given.toleranceUm as number | null | undefined) ?? null,
    },
    severities: rules.severities,
  };
}

/**
 * The demo team's rule set: invented values for trying the product, chosen for the demo layouts — not any
 * foundry's rule. Window sizes are the common choices of open rule decks (domain.md §2).
 */
export const DEMO_RULE_SET = {
  name: 'Larkspur deep-etch rules (demo)',
  description:
    'Invented demo rules — not a foundry rule deck. Density 5–60 % in 100/50 µm and 700/70 µm windows, at most 30 % between neighbouring windows, openings at least 2.5 µm wide; depth target and aspect-ratio limit from the model.',
  rules: {
    densityWindows: [
      { windowUm: 100, stepUm: 50 },
      { windowUm: 700, stepUm: 70 },
    ],
    windowEdge: 'clipped',
    kernel: { kind: null, lengthUm: null, outside: 'empty' },
    limits: { minDensity: 0.05, maxDensity: 0.6, maxGradient: 0.3, maxAspectRatio: null, targetDepthUm: null, toleranceUm: null, stopOverEtchBudgetUm: null, minWidthUm: 2.5 },
    severities: {},
  } satisfies RuleSetRulesInput,
} as const;
