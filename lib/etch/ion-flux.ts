/**
 * Direct (line-of-sight) ion flux reaching the bottom of an opening, relative to the flux on the open field, for a
 * narrow ion angular distribution. No charging, no wall scattering, no reflection (domain.md 3.5).
 *
 * Convention: σ is the standard deviation of ONE PROJECTED angle component (the angle measured in the trench's
 * cross-section plane), in degrees in the model and radians here. Mixing it with the polar-angle rms changes answers
 * by about √2.
 * - Trench: projected angle φ ~ Normal(0, σ); the bottom point x sees the opening between the angles to its two
 *   edges, so the centre fraction is erf(θa/(√2σ)), θa = atan(w/(2h)).
 * - Hole: cosⁿθ per solid angle with n = 1/σ² (σ in radians); the centre fraction is exactly 1 − cos^(n+1) θa.
 * - 'cosine' is the isotropic (cosine-law) flux: in 2-D its projected density is ½cos φ, in 3-D n = 1; the
 *   bottom-mean fraction then equals the handbook view factors (view-factor.ts), which the tests check.
 */
import { gaussLegendre } from './slot-transmission-solver';

export type IonAngularDistribution = { kind: 'gaussian'; sigmaRad: number } | { kind: 'cosine' };

/** erf with |error| < 1.2e-7 (Numerical Recipes erfc Chebyshev fit). */
export function erf(x: number): number {
  const z = Math.abs(x);
  const t = 1 / (1 + 0.5 * z);
  const r =
    t *
    Math.exp(
      -z * z -
        1.26551223 +
        t * (1.00002368 + t * (0.37409196 + t * (0.09678418 + t * (-0.18628806 + t * (0.27886807 + t * (-1.13520398 + t * (1.48851587 + t * (-0.82215223 + t * 0.17087277)))))))),
    );
  return x >= 0 ? 1 - r : r - 1;
}

/** Fraction of projected-angle flux between angles a < b (radians), normalised to the full half-space. */
function projectedFraction(dist: IonAngularDistribution, a: number, b: number): number {
  if (dist.kind === 'cosine') return 0.5 * (Math.sin(b) - Math.sin(a));
  const s = Math.SQRT2 * dist.sigmaRad;
  const full = erf(Math.PI / 2 / s);
  return (0.5 * (erf(b / s) - erf(a / s))) / full;
}

/** cosⁿθ exponent for a distribution: 1/σ² for a Gaussian, 1 for cosine-law. */
export function cosineExponent(dist: IonAngularDistribution): number {
  return dist.kind === 'cosine' ? 1 : 1 / (dist.sigmaRad * dist.sigmaRad);
}

/**
 * Trench: direct ion fraction at the bottom centre, AR = depth/width.
 * @example trenchIonCentreFraction(10, { kind: 'gaussian', sigmaRad: 2 * Math.PI / 180 }) // 0.84763
 */
export function trenchIonCentreFraction(aspectRatio: number, dist: IonAngularDistribution): number {
  if (aspectRatio <= 0) return 1;
  const ta = Math.atan(1 / (2 * aspectRatio));
  return projectedFraction(dist, -ta, ta);
}

/**
 * Hole: direct ion fraction at the bottom centre, AR = depth/diameter: 1 − cos^(n+1) θa.
 * @example holeIonCentreFraction(10, { kind: 'gaussian', sigmaRad: 1 / Math.sqrt(821) }) // 0.64151
 */
export function holeIonCentreFraction(aspectRatio: number, dist: IonAngularDistribution): number {
  if (aspectRatio <= 0) return 1;
  const cosA = (2 * aspectRatio) / Math.sqrt(1 + 4 * aspectRatio * aspectRatio);
  return 1 - Math.pow(cosA, cosineExponent(dist) + 1);
}

const GL16 = gaussLegendre(16);

/** ∫_a^b f by composite 16-point Gauss–Legendre on `panels` equal panels. */
function integrate(f: (x: number) => number, a: number, b: number, panels: number): number {
  const len = (b - a) / panels;
  let sum = 0;
  for (let p = 0; p < panels; p++) {
    const mid = a + (p + 0.5) * len;
    for (let i = 0; i < 16; i++) sum += (GL16.weights[i] ?? 0) * f(mid + 0.5 * len * (GL16.nodes[i] ?? 0));
  }
  return 0.5 * len * sum;
}

/**
 * Trench: direct ion fraction averaged across the bottom (width 1, depth AR), by quadrature.
 * For the cosine-law distribution this equals stripViewFactor(AR).
 */
export function trenchIonMeanFraction(aspectRatio: number, dist: IonAngularDistribution, panels = 16): number {
  if (aspectRatio <= 0) return 1;
  const h = aspectRatio;
  return integrate((x) => projectedFraction(dist, -Math.atan(x / h), Math.atan((1 - x) / h)), 0, 1, panels);
}

/**
 * Hole: direct ion fraction averaged over the bottom disk (radius 1, depth 2·AR), by quadrature over radius and
 * azimuth. For the cosine-law distribution this equals diskViewFactor(AR).
 */
export function holeIonMeanFraction(aspectRatio: number, dist: IonAngularDistribution, panels = 8): number {
  if (aspectRatio <= 0) return 1;
  const gap = 2 * aspectRatio; // in units of the radius
  const np1 = cosineExponent(dist) + 1;
  const atPoint = (rho: number) =>
    integrate(
      (phi) => {
        const c = Math.cos(phi);
        const s = Math.sin(phi);
        const t = (-rho * c + Math.sqrt(Math.max(0, 1 - rho * rho * s * s))) / gap; // tan θmax toward azimuth φ
        return 1 - Math.pow(1 / Math.sqrt(1 + t * t), np1);
      },
      0,
      Math.PI,
      panels,
    ) / Math.PI;
  return 2 * integrate((rho) => rho * atPoint(rho), 0, 1, panels);
}

/** Which bottom flux the rate model uses: the centre value (closed form) or the bottom mean (quadrature). */
export type IonFluxSite = 'centre' | 'bottom-mean';

/** Direct ion fraction for a feature kind at the chosen site. */
export function ionFluxRatio(kind: 'trench' | 'hole', aspectRatio: number, dist: IonAngularDistribution, site: IonFluxSite = 'centre'): number {
  if (kind === 'hole') return site === 'centre' ? holeIonCentreFraction(aspectRatio, dist) : holeIonMeanFraction(aspectRatio, dist);
  return site === 'centre' ? trenchIonCentreFraction(aspectRatio, dist) : trenchIonMeanFraction(aspectRatio, dist);
}
