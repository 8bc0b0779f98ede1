import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { pageContentSecurityPolicy } from '@/lib/http/csp';
import { PROJECT_ROOT } from '../support/server';

/**
 * The page policy has no 'unsafe-eval'. pixi.js 8 compiles its uniform-buffer sync functions with `new Function`
 * and throws "Current environment does not allow unsafe-eval" at renderer start unless `pixi.js/unsafe-eval` is
 * imported (pixi's documented CSP mode, node_modules/pixi.js/lib/rendering/renderers/shared/shader/UboSystem.mjs).
 * This guards the pair: whoever brings pixi.js into the app must bring that import too.
 */
function sources(dir: string): string[] {
  const out: string[] = [];
  for (const entry of readdirSync(dir)) {
    if (entry === 'node_modules' || entry.startsWith('.')) continue;
    const full = path.join(dir, entry);
    if (statSync(full).isDirectory()) out.push(...sources(full));
    else if (/\.(ts|tsx)$/.test(entry)) out.push(full);
  }
  return out;
}

describe('content security policy and the layout viewer', () => {
  it('the page policy allows no eval in production', () => {
    expect(pageContentSecurityPolicy('n0nce')).not.toContain('unsafe-eval');
    expect(pageContentSecurityPolicy('n0nce', { dev: true })).toContain('unsafe-eval');
  });

  it('if the app imports pixi.js, it also imports pixi.js/unsafe-eval (no eval under the CSP)', () => {
    const files = ['app', 'components', 'lib'].flatMap((d) => sources(path.join(PROJECT_ROOT, d)));
    const text = files.map((f) => readFileSync(f, 'utf8'));
    const usesPixi = text.some((t) => /from ['"]pixi\.js['"]|import\(['"]pixi\.js['"]\)/.test(t));
    const hasPolyfill = text.some((t) => /import ['"]pixi\.js\/unsafe-eval['"]|import\(['"]pixi\.js\/unsafe-eval['"]\)/.test(t));
    if (usesPixi) expect(hasPolyfill, "add `import 'pixi.js/unsafe-eval'` next to the viewer's pixi.js import").toBe(true);
  });
});
