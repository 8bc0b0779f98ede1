import type { Browser } from 'playwright-core';
import { readFileSync } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createNonce, pageContentSecurityPolicy } from '@/lib/http/csp';
import { launchBrowser } from '../support/browser';
import { PROJECT_ROOT } from '../support/server';

/**
 * pixi.js 8 under the app's page policy, in Chromium (WebGL on SwiftShader): with `pixi.js/unsafe-eval` a WebGL
 * renderer starts, draws, and loads a texture from a data: URL (pixi decodes images in a worker made from a blob:
 * URL); without it, the same policy stops the renderer — so the policy really forbids eval, and the polyfill is
 * what the viewer needs.
 */
const PIXI_DIR = path.join(PROJECT_ROOT, 'node_modules', 'pixi.js', 'dist');
const PNG_1x1 = 'data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8BQDwAEhQGAhKmMIQAAAABJRU5ErkJggg==';

function page(nonce: string, withPolyfill: boolean): string {
  return `<!doctype html><html><body>
<script nonce="${nonce}" src="/pixi.js"></script>
${withPolyfill ? `<script nonce="${nonce}" src="/unsafe-eval.js"></script>` : ''}
<script nonce="${nonce}">
(async () => {
  try {
    const app = new PIXI.Application();
    await app.init({ width: 64, height: 64, preference: 'webgl', background: '#ffffff' });
    document.body.appendChild(app.canvas);
    const g = new PIXI.Graphics().rect(8, 8, 32, 32).fill(0xc0733f);
    app.stage.addChild(g);
    const texture = await PIXI.Assets.load({ src: '${PNG_1x1}', loadParser: 'loadTextures' });
    app.stage.addChild(new PIXI.Sprite(texture));
    app.render();
    window.__result = { ok: true, renderer: app.renderer.name, textureWidth: texture.width };
  } catch (e) {
    window.__result = { ok: false, error: String(e && e.message || e) };
  }
})();
</script></body></html>`;
}

describe('pixi.js under the page content security policy (Chromium)', () => {
  let server: http.Server;
  let base: string;
  let browser: Browser;
  beforeAll(async () => {
    server = http.createServer((req, res) => {
      const file = req.url === '/pixi.js' ? 'pixi.js' : req.url === '/unsafe-eval.js' ? 'packages/unsafe-eval.js' : null;
      if (file) {
        res.writeHead(200, { 'content-type': 'text/javascript' });
        res.end(readFileSync(path.join(PIXI_DIR, file)));
        return;
      }
      const nonce = createNonce();
      res.writeHead(200, { 'content-type': 'text/html', 'content-security-policy': pageContentSecurityPolicy(nonce) });
      res.end(page(nonce, req.url === '/with-polyfill'));
    });
    await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
    base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await new Promise((r) => server?.close(r));
  });

  async function run(url: string): Promise<{ ok: boolean; renderer?: string; textureWidth?: number; error?: string }> {
    const p = await browser.newPage();
    try {
      await p.goto(url);
      await p.waitForFunction(() => (window as unknown as { __result?: unknown }).__result !== undefined, null, { timeout: 30_000 });
      return (await p.evaluate(() => (window as unknown as { __result: unknown }).__result)) as { ok: boolean; error?: string };
    } finally {
      await p.close();
    }
  }

  it('with pixi.js/unsafe-eval: a WebGL renderer starts, draws and loads a data: texture', async () => {
    const result = await run(`${base}/with-polyfill`);
    expect(result).toEqual({ ok: true, renderer: 'webgl', textureWidth: 1 });
  });

  it('without it: the policy blocks pixi\'s eval and the renderer does not start', async () => {
    const result = await run(`${base}/without`);
    expect(result.ok).toBe(false);
    expect(result.error).toMatch(/unsafe-eval/);
  });
});
