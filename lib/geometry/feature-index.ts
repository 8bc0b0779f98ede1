/** Spatial index of features (rbush) for viewport and point queries, all in µm. */
import RBush from 'rbush';
import type { Box, Feature } from './types';

interface Entry {
  minX: number;
  minY: number;
  maxX: number;
  maxY: number;
  feature: Feature;
}

export class FeatureIndex {
  private readonly tree = new RBush<Entry>();

  constructor(features: readonly Feature[]) {
    this.tree.load(features.map((f) => ({ minX: f.bboxUm[0], minY: f.bboxUm[1], maxX: f.bboxUm[2], maxY: f.bboxUm[3], feature: f })));
  }

  /** Features whose bbox intersects [x0, y0, x1, y1] (µm, closed). */
  search(bboxUm: Box): Feature[] {
    return this.tree.search({ minX: bboxUm[0], minY: bboxUm[1], maxX: bboxUm[2], maxY: bboxUm[3] }).map((e) => e.feature);
  }

  /**
   * Features whose bbox contains (x, y) µm, smallest area first. This is a bbox test: an L-shaped feature's
   * notch still answers; callers needing the exact shape test the rings.
   */
  at(xUm: number, yUm: number): Feature[] {
    return this.search([xUm, yUm, xUm, yUm]).sort((a, b) => a.areaUm2 - b.areaUm2);
  }
}
