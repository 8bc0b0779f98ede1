/**
 * The canvas viewer's pixi.js 8 scene, built once per mounted viewer and destroyed on unmount. Layers, bottom up:
 * coverage raster (grey, when polygons are not drawn), polygons per layer (fill + outline, custom-shader meshes),
 * heat map (one textured quad, un-batched: far cheaper than a batched Sprite on SwiftShader, see
 * shared/viewer-perf.md), then a screen-space overlay with flag marks and the selection highlight. Renders on
 * demand (one frame per change, coalesced by requestAnimationFrame), never in a loop.
 */
// The page's content security policy has no 'unsafe-eval': pixi's documented CSP mode replaces its run-time
// compiled shader-sync functions with precompiled ones.
import 'pixi.js/unsafe-eval';
import { Application, BufferImageSource, Container, Geometry, Graphics, Mesh, MeshSimple, Shader, Texture, type MeshGeometry } from 'pixi.js';
import type { LayerMesh } from '@/lib/viewer/polygon-mesh';
import { layoutToScreen, worldMatrix, type View } from '@/lib/viewer/view-transform';
import { hitThinned, severityOrder, thinMarks, type ThinnedMarks } from '@/lib/viewer/flag-thinning';
import { SEVERITY_CODES, type FlagColumns } from '@/lib/viewer/flag-wire';
import { markStyle } from './flag-marks';
import { buildMarkMesh, type MarkInstance } from './mark-mesh';

const VERTEX = `in vec2 aPosition;
in vec4 aColor;
out vec4 vColor;
uniform mat3 uProjectionMatrix;
uniform mat3 uWorldTransformMatrix;
uniform mat3 uTransformMatrix;
void main() {
  mat3 mvp = uProjectionMatrix * uWorldTransformMatrix * uTransformMatrix;
  gl_Position = vec4((mvp * vec3(aPosition, 1.0)).xy, 0.0, 1.0);
  vColor = aColor;
}`;
const FRAGMENT = `in vec4 vColor;
void main() {
  gl_FragColor = vColor;
}`;

/**
 * Outlines are drawn only while this few polygons are in the scene: on SwiftShader 80k outline segments cost
 * ~26 ms a frame against ~14 ms for the fills of the same 23k polygons (measured, 1M-polygon bench layout).
 */
export const OUTLINE_BUDGET = 12_000;

export interface RasterLayer {
  rgba: Uint8ClampedArray;
  nx: number;
  ny: number;
  x0Um: number;
  y0Um: number;
  pixelUm: number;
}

/** The selected flag: its index in the scene's flags (−1 when not among them) and where it is. */
export type SelectedMark = { index: number; xUm: number; yUm: number; bboxUm: [number, number, number, number] };

export class ViewerScene {
  readonly app = new Application();
  private world = new Container();
  private coverage: MeshSimple | null = null;
  private heat: MeshSimple | null = null;
  private polygons = new Container();
  private layerMeshes = new Map<number, Container>();
  private overlay = new Container();
  /** Every flag of the analysis (or of the what-if), as columns. */
  private flags: FlagColumns | null = null;
  /** The flags by severity (thinMarks draws the worst first). */
  private flagOrder: Uint32Array | null = null;
  /** The marks of the last placement (for hit tests). */
  private thinned: ThinnedMarks | null = null;
  /** Called after each placement with the marks drawn and the flags in view. */
  onMarksPlaced: ((drawn: number, inView: number) => void) | null = null;
  private markMesh: Mesh<Geometry, Shader> | null = null;
  private retiredGeometry: Geometry[] = [];
  private highlight = new Graphics();
  private shader: Shader | null = null;
  private view: View = { cx: 0, cy: 0, scale: 1, width: 1, height: 1 };
  private pending = 0;
  private selected: SelectedMark | null = null;
  private destroyed = false;
  /** Whether the drawn polygons have outlines (see OUTLINE_BUDGET). */
  outlinesShown = true;
  /** Replaced meshes; destroyed after the next frame so no bind group still points at their textures. */
  private retired: MeshSimple[] = [];
  /** Duration of the last render() call, ms (for the benchmark). */
  lastRenderMs = 0;

  async init(host: HTMLElement, width: number, height: number): Promise<void> {
    await this.app.init({
      width,
      height,
      preference: 'webgl',
      antialias: false,
      autoStart: false,
      background: '#f4f2ee',
      resolution: 1,
      preserveDrawingBuffer: true,
    });
    if (this.destroyed) {
      // Unmounted while the renderer was starting: release its WebGL context now.
      try {
        this.app.destroy({ removeView: true });
      } catch {
        /* destroy() already tore it down */
      }
      return;
    }
    this.app.ticker.stop();
    this.app.canvas.style.display = 'block';
    this.app.canvas.dataset.testid = 'viewer-canvas';
    host.appendChild(this.app.canvas);
    this.shader = Shader.from({ gl: { vertex: VERTEX, fragment: FRAGMENT, name: 'trenchant-polygons' }, resources: {} });
    this.world.addChild(this.polygons);
    this.app.stage.addChild(this.world, this.overlay);
    this.overlay.addChild(this.highlight);
  }

  get canvas(): HTMLCanvasElement {
    return this.app.canvas;
  }

  setView(v: View): void {
    const sizeChanged = v.width !== this.view.width || v.height !== this.view.height;
    this.view = v;
    if (sizeChanged) this.app.renderer.resize(v.width, v.height);
    const m = worldMatrix(v);
    this.world.position.set(m.tx, m.ty);
    this.world.scale.set(m.a, m.d);
    this.placeOverlay();
    this.requestRender();
  }

  private quad(r: RasterLayer, old: MeshSimple | null, zIndex: number): MeshSimple {
    const source = new BufferImageSource({ resource: r.rgba, width: r.nx, height: r.ny, scaleMode: 'nearest' });
    const texture = new Texture({ source });
    const w = r.nx * r.pixelUm;
    const h = r.ny * r.pixelUm;
    const vertices = new Float32Array([0, 0, w, 0, w, h, 0, h]);
    // Texture row 0 is the bottom row of the grid (TRGRID1 order) and sits at y0 in the y-up world.
    const mesh = new MeshSimple({ texture, vertices, uvs: new Float32Array([0, 0, 1, 0, 1, 1, 0, 1]), indices: new Uint32Array([0, 1, 2, 0, 2, 3]) });
    (mesh.geometry as MeshGeometry).batchMode = 'no-batch';
    mesh.position.set(r.x0Um, r.y0Um);
    mesh.zIndex = zIndex;
    if (old) {
      mesh.alpha = old.alpha;
      mesh.visible = old.visible;
      this.world.removeChild(old);
      this.retired.push(old);
    }
    this.world.addChild(mesh);
    this.world.sortableChildren = true;
    return mesh;
  }

  setHeat(r: RasterLayer | null, opacity: number): void {
    if (!r) {
      if (this.heat) this.heat.visible = false;
    } else {
      this.heat = this.quad(r, this.heat, 3);
      this.heat.visible = true;
      this.heat.alpha = opacity;
    }
    this.requestRender();
  }

  setHeatOpacity(opacity: number): void {
    if (this.heat) this.heat.alpha = opacity;
    this.requestRender();
  }

  setCoverage(r: RasterLayer): void {
    this.coverage = this.quad(r, this.coverage, 1);
    this.requestRender();
  }

  /** Draw the coverage raster (true) or the polygons (false). */
  setPolygonMode(polygons: boolean): void {
    if (this.coverage) this.coverage.visible = !polygons;
    this.polygons.visible = polygons;
    this.requestRender();
  }

  /** Replace the drawn polygons (µm relative to origin). */
  setPolygons(meshes: LayerMesh[], originX: number, originY: number, hidden: Set<number>): void {
    for (const c of this.layerMeshes.values()) {
      // Meshes do not own their geometry: free the GPU buffers after the next frame no longer uses them.
      for (const child of c.children) if (child instanceof Mesh) this.retiredGeometry.push(child.geometry as Geometry);
      this.polygons.removeChild(c);
      c.destroy({ children: true });
    }
    this.layerMeshes.clear();
    this.polygons.position.set(originX, originY);
    this.polygons.zIndex = 2;
    if (!this.shader) return;
    const outlines = meshes.reduce((n, m) => n + m.polygons, 0) <= OUTLINE_BUDGET;
    this.outlinesShown = outlines;
    for (const m of meshes) {
      const group = new Container();
      const fill = new Geometry({ attributes: { aPosition: { buffer: m.positions, format: 'float32x2' }, aColor: { buffer: m.colors, format: 'unorm8x4' } }, indexBuffer: m.fillIndices });
      if (m.fillIndices.length > 0) group.addChild(new Mesh({ geometry: fill, shader: this.shader }));
      if (m.lineIndices.length > 0 && outlines) {
        // Outline in the layer colour at full opacity (the fill colour un-premultiplied).
        const outlineColors = new Uint32Array(m.colors.length).fill(opaque(m.colors[0] ?? 0));
        const lines = new Geometry({ attributes: { aPosition: { buffer: m.positions, format: 'float32x2' }, aColor: { buffer: outlineColors, format: 'unorm8x4' } }, indexBuffer: m.lineIndices, topology: 'line-list' });
        group.addChild(new Mesh({ geometry: lines, shader: this.shader }));
      }
      group.visible = !hidden.has(m.layerIndex);
      this.layerMeshes.set(m.layerIndex, group);
      this.polygons.addChild(group);
    }
    this.requestRender();
  }

  setLayerVisible(layerIndex: number, visible: boolean): void {
    const g = this.layerMeshes.get(layerIndex);
    if (g) g.visible = visible;
    this.requestRender();
  }

  setFlags(flags: FlagColumns | null): void {
    this.flags = flags;
    this.flagOrder = flags ? severityOrder(flags.severity, flags.count) : null;
    this.placeOverlay();
    this.requestRender();
  }

  private marksVisible = true;
  setMarksVisible(visible: boolean): void {
    this.marksVisible = visible;
    this.placeOverlay();
    this.requestRender();
  }

  setSelected(sel: SelectedMark | null): void {
    this.selected = sel;
    this.placeOverlay();
    this.requestRender();
  }

  /** The drawn mark under screen point (sx, sy): its flag index and how many flags it stands for. */
  hitTest(sx: number, sy: number): { index: number; merged: number } | null {
    const t = this.thinned;
    if (!t || !this.marksVisible) return null;
    const k = hitThinned(t, sx, sy);
    return k < 0 ? null : { index: t.drawn[k]!, merged: t.merged[k]! };
  }

  private placeOverlay(): void {
    const v = this.view;
    const c = this.flags;
    // Declutter by screen cell (lib/viewer/flag-thinning.ts); the selected flag always shows.
    const t = c && this.marksVisible ? thinMarks(v, c.xUm, c.yUm, c.severity, c.count, this.selected?.index ?? -1, this.flagOrder ?? undefined) : null;
    this.thinned = t;
    const shown: MarkInstance[] = [];
    if (t && c) {
      for (let k = 0; k < t.drawn.length; k++) {
        const st = markStyle(SEVERITY_CODES[c.severity[t.drawn[k]!] ?? 2] ?? 'info');
        shown.push({ x: t.sx[k]!, y: t.sy[k]!, shape: st.shape, size: st.size, color: st.color });
      }
    }
    this.onMarksPlaced?.(t ? t.drawn.length : 0, t ? t.inView : 0);
    // Least severe first in the mesh, so errors are drawn on top.
    shown.reverse();
    this.setMarkMesh(shown);
    const h = this.highlight;
    h.clear();
    const f = this.selected;
    if (f) {
      const [ax, ay] = layoutToScreen(v, f.bboxUm[0], f.bboxUm[3]);
      const [bx, by] = layoutToScreen(v, f.bboxUm[2], f.bboxUm[1]);
      const pad = 4;
      h.rect(ax - pad, ay - pad, Math.max(bx - ax, 0) + 2 * pad, Math.max(by - ay, 0) + 2 * pad).stroke({ color: 0xffffff, width: 4 }).stroke({ color: 0x000000, width: 2 });
      const [cx, cy] = layoutToScreen(v, f.xUm, f.yUm);
      h.circle(cx, cy, 14).stroke({ color: 0xffffff, width: 4 }).stroke({ color: 0x000000, width: 2 });
    }
  }

  private setMarkMesh(shown: MarkInstance[]): void {
    if (this.markMesh) {
      this.overlay.removeChild(this.markMesh);
      this.retiredGeometry.push(this.markMesh.geometry);
      this.markMesh.destroy();
      this.markMesh = null;
    }
    if (shown.length === 0 || !this.shader) return;
    const m = buildMarkMesh(shown);
    const geometry = new Geometry({ attributes: { aPosition: { buffer: m.positions, format: 'float32x2' }, aColor: { buffer: m.colors, format: 'unorm8x4' } }, indexBuffer: m.indices });
    const mesh = new Mesh({ geometry, shader: this.shader });
    this.markMesh = mesh;
    this.overlay.addChildAt(mesh, 0);
  }

  requestRender(): void {
    if (this.pending || this.destroyed) return;
    this.pending = requestAnimationFrame(() => {
      this.pending = 0;
      this.renderNow();
    });
  }

  renderNow(): void {
    if (this.destroyed) return;
    const t = performance.now();
    this.app.render();
    this.lastRenderMs = performance.now() - t;
    for (const m of this.retired.splice(0)) m.destroy({ texture: true, textureSource: true });
    for (const g of this.retiredGeometry.splice(0)) g.destroy(true);
  }

  /** PNG of the current view (drawn now, so it matches what is on screen). */
  async exportPng(): Promise<Blob> {
    this.renderNow();
    return new Promise((resolve, reject) => this.app.canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('the canvas could not be encoded as PNG'))), 'image/png'));
  }

  destroy(): void {
    if (this.destroyed) return;
    this.destroyed = true;
    if (this.pending) cancelAnimationFrame(this.pending);
    // app.init may still be running; destroying a half-built renderer throws, so only destroy a finished one.
    try {
      if (this.app.renderer) this.app.destroy({ removeView: true }, { children: true, texture: true, textureSource: true });
    } catch {
      /* already torn down */
    }
  }
}

/** Premultiplied colour → the same colour fully opaque. */
function opaque(c: number): number {
  const a = (c >>> 24) / 255;
  if (a <= 0) return 0xff000000;
  const r = Math.min(255, Math.round((c & 0xff) / a));
  const g = Math.min(255, Math.round(((c >>> 8) & 0xff) / a));
  const b = Math.min(255, Math.round(((c >>> 16) & 0xff) / a));
  return ((0xff << 24) | (b << 16) | (g << 8) | r) >>> 0;
}
