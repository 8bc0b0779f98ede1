/**
 * Placement transforms of GDSII references. A transform is kept both as its parameters (reflect, mag, angle —
 * needed to honour the absolute-magnification/absolute-angle flags when composing) and as the affine matrix
 * x' = a·x + b·y + tx, y' = c·x + d·y + ty. Order (GDSII manual): reflect about x, scale, rotate
 * counter-clockwise, translate.
 */
export interface Placement {
  reflect: boolean;
  mag: number;
  angleDeg: number;
  a: number;
  b: number;
  c: number;
  d: number;
  tx: number;
  ty: number;
}

/** cos/sin of an angle in degrees, exact for multiples of 90° so Manhattan layouts stay on the integer grid. */
function cosSin(deg: number): [number, number] {
  const r = ((deg % 360) + 360) % 360;
  if (r === 0) return [1, 0];
  if (r === 90) return [0, 1];
  if (r === 180) return [-1, 0];
  if (r === 270) return [0, -1];
  const t = (r * Math.PI) / 180;
  return [Math.cos(t), Math.sin(t)];
}

export function placement(reflect: boolean, mag: number, angleDeg: number, tx: number, ty: number): Placement {
  const [cs, sn] = cosSin(angleDeg);
  const s = reflect ? -1 : 1;
  return { reflect, mag, angleDeg, a: mag * cs, b: -mag * sn * s, c: mag * sn, d: mag * cs * s, tx, ty };
}

export const IDENTITY: Placement = placement(false, 1, 0, 0, 0);

/**
 * Transform of a child placed by a reference (reflect, mag, angle, absolute flags) at `(ox, oy)` in the parent's
 * frame, the parent being placed by `p`. With the absolute-magnification flag the child's scale is the reference's
 * MAG alone; with the absolute-angle flag its rotation is the reference's ANGLE alone (reflections still compose).
 */
export function compose(
  p: Placement,
  ref: { reflect: boolean; mag: number; angleDeg: number; absMag: boolean; absAngle: boolean },
  ox: number,
  oy: number,
): Placement {
  const mag = ref.absMag ? ref.mag : p.mag * ref.mag;
  const angle = ref.absAngle ? ref.angleDeg : p.angleDeg + (p.reflect ? -ref.angleDeg : ref.angleDeg);
  return placement(p.reflect !== ref.reflect, mag, angle, p.a * ox + p.b * oy + p.tx, p.c * ox + p.d * oy + p.ty);
}

/**
 * Write into `out` the transform of instance (i, j) of a reference (lattice steps colDx… as in CellRef): the
 * linear part of `shape` (= compose(p, ref, 0, 0)), the origin P1 + i·colStep + j·rowStep placed by `p`. The
 * whole-file flatten and the tile reader both use it, so their vertices agree to the last bit.
 */
export function placeInstance(
  p: Placement, shape: Placement,
  ref: { x: number; y: number; colDx: number; colDy: number; rowDx: number; rowDy: number },
  i: number, j: number, out: Placement,
): Placement {
  const ox = ref.x + i * ref.colDx + j * ref.rowDx;
  const oy = ref.y + i * ref.colDy + j * ref.rowDy;
  out.reflect = shape.reflect; out.mag = shape.mag; out.angleDeg = shape.angleDeg;
  out.a = shape.a; out.b = shape.b; out.c = shape.c; out.d = shape.d;
  out.tx = p.a * ox + p.b * oy + p.tx;
  out.ty = p.c * ox + p.d * oy + p.ty;
  return out;
}
