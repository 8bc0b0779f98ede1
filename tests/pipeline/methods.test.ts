/**
 * The Methods text is data; these checks keep it in step with the code it describes (a constant changed in code
 * without its text fails here).
 */
import { describe, expect, it } from 'vitest';
import { KERNEL_RADIUS_IN_L, MIN_L_PIXELS } from '@/lib/geometry';
import { CAUTIONS, formatMethodBlock, METHOD_SECTIONS, methodBlock, methodSection, methodsAsText, type MethodSection } from '@/lib/methods';
import { DEFAULT_SEVERITY } from '@/lib/pipeline/flags';
import { GRID_KINDS } from '@/lib/pipeline/grid-file';
import { RISK_CAP } from '@/lib/pipeline/result-maps';
import { DEFAULT_DENSITY_WINDOWS } from '@/lib/pipeline/settings';

const all = (list: readonly MethodSection[]): MethodSection[] => list.flatMap((s) => [s, ...all(s.subsections ?? [])]);
const text = (s: MethodSection) => [s.title, ...s.body, ...s.formulas.map((f) => `${f.label} ${f.text}`)].join('\n');

describe('METHOD_SECTIONS', () => {
  it('has unique ids and every section has a title and body', () => {
    const ids = all(METHOD_SECTIONS).map((s) => s.id);
    expect(new Set(ids).size).toBe(ids.length);
    for (const s of all(METHOD_SECTIONS)) {
      expect(s.title.length).toBeGreaterThan(0);
      expect(s.body.length).toBeGreaterThan(0);
    }
  });

  it('documents density windows with origin, denominator and edge policy, and the default windows', () => {
    const t = text(methodSection('density-windows')!);
    for (const word of ['Origin', 'Denominator', 'Edge policy']) expect(t).toContain(word);
    for (const w of DEFAULT_DENSITY_WINDOWS) expect(t).toContain(`${w.windowUm} µm stepped by ${w.stepUm} µm`);
    expect(t).toMatch(/common choices, not any foundry's rule/);
  });

  it('describes every flag kind with its default severity', () => {
    const t = text(methodSection('flag-rules')!);
    const words: Record<string, string> = {
      'under-target-depth': 'Under target depth',
      'over-etch-budget': 'Over-etch beyond the stop budget',
      'aspect-ratio-above-limit': 'Aspect ratio above limit',
      'width-below-minimum': 'Width below the rule minimum',
      'window-density-below-min': 'Window density below minimum',
      'window-density-above-max': 'above maximum',
      'density-gradient-above-limit': 'Density gradient above limit',
      'outside-calibrated-range': 'Outside the calibrated range',
    };
    for (const [kind, severity] of Object.entries(DEFAULT_SEVERITY)) {
      const sentence = t.split('\n').find((line) => line.includes(words[kind] as string));
      expect(sentence, kind).toBeDefined();
      expect(sentence, kind).toContain(`(${severity})`);
    }
    expect(t).toContain(`capped at ${RISK_CAP}`);
  });

  it('names every result map kind', () => {
    const t = text(methodSection('result-maps')!).toLowerCase();
    for (const kind of GRID_KINDS) expect(t).toContain(kind.replace('-', ' '));
  });

  it('states the kernel truncation and coarsening the geometry engine uses', () => {
    const t = text(methodSection('effective-density')!);
    expect(t).toContain(`truncated at ${KERNEL_RADIUS_IN_L.gaussian} L (Gaussian`);
    expect(t).toContain(`${KERNEL_RADIUS_IN_L.exponential} L (exponential)`);
    expect(t).toContain(`more than ${MIN_L_PIXELS.gaussian} pixels (Gaussian) or ${MIN_L_PIXELS.exponential} pixels (exponential)`);
  });

  it('gives every etch-model subsection a formula and a source', () => {
    for (const s of methodSection('etch-model')!.subsections!) {
      expect(s.formulas.length, s.id).toBeGreaterThan(0);
      expect(s.sources.length, s.id).toBeGreaterThan(0);
    }
  });

  it('ends with the cautions', () => {
    expect(METHOD_SECTIONS.at(-1)!.body).toEqual(CAUTIONS);
  });
});

describe('methodBlock / methodsAsText', () => {
  it('methodBlock lists the choices behind a result and links each to a section that exists', () => {
    const lines = methodBlock({
      etchLayers: ['5/0'],
      polarity: 'clear',
      dieBboxUm: [0, 0, 1000, 1000],
      pixelUm: 2,
      pixelAuto: true,
      windows: [{ windowUm: 100, stepUm: 50, originUm: [0, 0], method: { origin: 'O', denominator: 'D', edgePolicy: 'E' } }],
      kernel: { kind: 'gaussian', lengthUm: 500, outside: 'empty', fromModel: true },
      model: { name: 'm', version: '1', calibrationDate: null },
      globalDensity: 0.0108,
    });
    for (const l of lines) expect(methodSection(l.sectionId), l.label).toBeDefined();
    expect(lines.find((l) => l.label === 'Windows 100/50 µm')?.value).toBe('origin O; denominator D; edge E');
    expect(lines.find((l) => l.label === 'Process model')?.value).toBe('m version 1, no calibration date recorded');
    expect(formatMethodBlock(lines).split('\n')[0]).toBe('Etch layers        5/0 (clear: drawn shapes are the openings)');
  });

  it('methodsAsText renders every section title and source strength in words', () => {
    const t = methodsAsText();
    for (const s of all(METHOD_SECTIONS)) expect(t).toContain(s.title);
    expect(t).toContain('[citation from memory, to be verified]');
  });
});
