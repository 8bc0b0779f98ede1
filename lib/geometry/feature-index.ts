/** Spatial index of features (rbush) for viewport and point queries, all in µm. */
import RBush from 'rbush';
import type { Box, Feature } from './types';

/**
 * The tree stores the features themselves (no wrapper object per feature: at 10⁶ features the wrappers cost more
 * than the bulk load); their bbox is read through toBBox and the sort comparators.
 */
class FeatureTree extends RBush<Feature> {
  override toBBox(f: Feature): { minX: number; minY: number; maxX: number; maxY: number } {
    return { minX: f.bboxUm[0], minY: f.bboxUm[1], maxX: f.bboxUm[2], maxY: f.bboxUm[3] };
  }
  override compareMinX(a: Feature, b: Feature): number {
    return a.bboxUm[0] - b.bboxUm[0];
  }
  override compareMinY(a: Feature, b: Feature): number {
    return a.bboxUm[1] - b.bboxUm[1];
  }
}

export class FeatureIndex {
  private readonly tree = new FeatureTree();

  /** Bulk-loads (OMT packing) all features at once. */
  constructor(features: readonly Feature[]) {
    this.tree.load(features); // rbush copies the array before sorting it
  }

  /** Features whose bbox intersects [x0, y0, x1, y1] (µm, closed). */
  search(bboxUm: Box): Feature[] {
    return this.tree.search({ minX: bboxUm[0], minY: bboxUm[1], maxX: bboxUm[2], maxY: bboxUm[3] });
  }

  /**
   * Features whose bbox contains (x, y) µm, smallest area first. This is a bbox test: an L-shaped feature's
   * notch still answers; callers needing the exact shape test the rings.
   */
  at(xUm: number, yUm: number): Feature[] {
    return this.search([xUm, yUm, xUm, yUm]).sort((a, b) => a.areaUm2 - b.areaUm2);
  }
}
