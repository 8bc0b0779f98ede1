/**
 * The Methods text: every computation behind a Trenchant result, in the words reports use. Keep this in step with
 * the code it describes (lib/geometry, lib/etch, lib/pipeline); each section names its module in `implementedIn`
 * comments so a change there is easy to mirror here.
 */
import { CAUTIONS } from './cautions';
import type { MethodSection } from './types';

// implementedIn: lib/pipeline/etch-layers.ts, lib/geometry/raster.ts, lib/pipeline/settings.ts (choosePixelUm)
const openArea: MethodSection = {
  id: 'open-area',
  title: 'Open area, die extent and pixels',
  body: [
    'The etch layers chosen for an analysis are merged into one mask. Overlapping shapes are counted once (nonzero union), so drawing a shape twice never doubles its area.',
    'With clear polarity the drawn shapes are the openings that get etched. With dark polarity everything inside the die extent except the drawn shapes is open.',
    'The die extent is the bounding box of everything in the layout, over all layers. It is the region densities are divided by and the default origin of the density windows.',
    'The die is covered by a grid of square pixels starting at its lower-left corner. Each pixel holds the exact fraction of its area that is open (coverage), computed from the polygon edges rather than by sampling. The last column and row may reach past the die by less than one pixel; nothing there is open, and only the part inside the die counts in any denominator.',
    'Automatic pixel size: the target is one fiftieth of the smallest density window, or coarser if needed to keep the grid within the pixel budget (4 million pixels unless set). When the target is at most the greatest common divisor of all window sizes and steps, the pixel is the smallest whole fraction of that divisor not below the target, so every window edge falls on a pixel edge and window sums are exact; otherwise the target is rounded up to the 1–2–2.5–5 series. A chosen pixel size that would exceed the budget is refused with the size that would fit.',
  ],
  formulas: [
    { label: 'Coverage of pixel (i, j)', text: 'c(i,j) = area(open ∩ pixel(i,j)) / p²', where: ['p: pixel size (µm)'] },
    { label: 'Global density', text: 'ρ_global = Σ c(i,j)·p² / A_die', where: ['A_die: die extent area (µm²)'] },
    { label: 'Automatic pixel size', text: 'p* = max(√(A_die / N_max), W_min / 50);  p = g / ⌊g / p*⌋ if p* ≤ g, else nice⌈p*⌉', where: ['N_max: pixel budget', 'W_min: smallest density window (µm)', 'g: greatest common divisor of all window sizes and steps (µm)', 'nice⌈x⌉: smallest of 1, 2, 2.5, 5 × 10^k that is ≥ x'] },
  ],
  sources: [{ citation: 'Exact-area pixel coverage by edge accumulation, as used by outline-font rasterisers.', strength: 'common-practice' }],
};

// implementedIn: lib/geometry/window-density.ts, lib/pipeline/run-analysis.ts
const densityWindows: MethodSection = {
  id: 'density-windows',
  title: 'Density windows',
  body: [
    'Rule manuals check pattern density in square windows of side W stepped by S across the chip, with a minimum and maximum per window. Trenchant computes one set of windows for every window/step pair in the settings. The defaults, 100 µm stepped by 50 µm and 700 µm stepped by 70 µm, are common choices, not any foundry\'s rule: enter the values of your rule manual.',
    'Origin: window (0, 0) has its lower-left corner at the lower-left corner of the die extent unless another origin is given; window (i, j) starts at origin + (i·S, j·S).',
    'Denominator: each value is the open area in the window divided by the area of the window that lies inside the die. For full windows that is W².',
    'Edge policy: with "clipped" (the default) windows continue until they reach the far edge of the die, and windows past the edge are clipped to the die and divided by their clipped area, so every part of the die is in some window. With "full" only windows lying wholly inside the die are used; a strip narrower than one step at the far edges may then be in no window.',
    'Results differ with origin, denominator and edge policy, and rule documents often give limits without saying which they use. Every result therefore carries its method block with these three choices spelled out.',
    'When W, S and the origin offset are whole multiples of the pixel size the window sums are exact; otherwise pixel coverage is interpolated and the method block says so.',
    'Density gradient: the absolute difference between the densities of two windows one step apart along x or y (windows sharing an edge in the window grid).',
  ],
  formulas: [
    { label: 'Window density', text: 'ρ_W(i,j) = A_open(window(i,j) ∩ die) / A(window(i,j) ∩ die)' },
    { label: 'Window position', text: 'window(i,j) = [x₀ + i·S, x₀ + i·S + W] × [y₀ + j·S, y₀ + j·S + W]', where: ['(x₀, y₀): window origin (µm)', 'W: window side (µm)', 'S: step (µm)'] },
    { label: 'Density gradient', text: 'g = max |ρ_W(i,j) − ρ_W(i′,j′)| over windows with |i − i′| + |j − j′| = 1' },
  ],
  sources: [
    { citation: 'SkyWater SKY130 open PDK design rule documentation (density rules with window and step)', strength: 'published' },
    { citation: 'IHP SG13G2 open PDK layout rules (density windows; a 20 % global cap on a backside-etch layer)', strength: 'published' },
    { citation: 'Caps on the density difference between neighbouring windows', strength: 'common-practice' },
  ],
};

// implementedIn: lib/geometry (effectiveDensity)
const effectiveDensity: MethodSection = {
  id: 'effective-density',
  title: 'Effective density (kernel)',
  body: [
    'Microloading depends on how much open area surrounds a point, weighted by distance. The effective density is the coverage map convolved with a normalised kernel of length L; it is 1 in the middle of a large open field and 0 far from any opening.',
    'L defaults to the process model\'s loading length, which is part of its calibration. Deep silicon etching has been reported to show microloading over a radius of about 4.5 mm, so L is often millimetres; reactive-ion etching with little loading may use much shorter lengths.',
    'Outside the die the layout is taken as empty (nothing open) unless "mirror" is chosen, which reflects the die\'s own pattern at its edges, a stand-in for neighbouring dies on the wafer.',
    'Kernel shape and length come from the process model unless the analysis sets them, because the model\'s loading coefficient was calibrated with them.',
    'Computation: the kernel is integrated over each pixel and truncated at 4 L (Gaussian, dropping 0.013 % of its weight) or 10 L (exponential), then renormalised; the convolution runs by FFT. When L spans more than 8 pixels (Gaussian) or 8 pixels (exponential) the coverage is first averaged over blocks of pixels, convolved on that coarser grid and interpolated back bilinearly, also at the die\'s edges (where the mirrored outside is reflected at the die\'s own edge); against an independent convolution (scipy) this stayed within 0.0015 of density (0.15 percentage points).',
  ],
  formulas: [
    { label: 'Effective density', text: 'ρ_eff(x) = ∫ c(x′)·k(|x − x′|) dA′,  ∫ k dA = 1' },
    { label: 'Gaussian kernel', text: 'k(r) = exp(−r² / 2L²) / (2πL²)', where: ['L: kernel length (µm), the per-axis standard deviation'] },
    { label: 'Exponential kernel', text: 'k(r) = exp(−r / L) / (2πL²)' },
  ],
  sources: [
    { citation: 'Hedlund, Blom & Berg, J. Vac. Sci. Technol. A 12, 1962 (1994): microloading in reactive ion etching', strength: 'published' },
    { citation: 'Jensen & Hansen, Proc. SPIE 5342 (2004): microloading range ≈ 4.5 mm in deep silicon etching', strength: 'published' },
    { citation: 'Ouma, Boning et al., IEEE Trans. Semicond. Manuf. 15, 232 (2002): effective pattern density in CMP modelling', strength: 'from-memory' },
  ],
};

// implementedIn: lib/geometry (extractFeatures, localWidthMap), lib/pipeline/predict-features.ts
const featuresAndWidth: MethodSection = {
  id: 'features-and-width',
  title: 'Openings and their width',
  body: [
    'Each connected open region of the merged mask is one opening. Two openings touching only at a point are separate; openings sharing an edge stretch are one.',
    'Width that governs the etch (the opening\'s width): among the largest disks that fit inside the opening, the smallest one centred on the opening\'s centre line. That is the width of a trench, the diameter of a round hole, the side of a square hole, the narrower arm of an L and the wall of a ring; convex corners do not count. The diameter of the largest disk that fits anywhere (the largest inscribed width) is reported beside it. Known limit: in a gradually tapered opening this reports the widest part of the taper.',
    'Widths are exact for rectangles, convex shapes and polygonised circles, and for Manhattan (axis-parallel) openings on any drawing grid, 1 nm included: those are measured on a compressed lattice whose lines are the vertex coordinates, the centre line between every pair of facing edges and the places where those centre lines end, refined near the corners (at most 65,536 nodes). The distance to the edges is exact at every node (a Felzenszwalb–Huttenlocher distance transform on the uneven node positions), largest disks between nodes are solved on the exact edges, and whether a narrow part sits inside a larger disk is settled on the exact distance too; on random unions of two to four trenches this matches a brute-force half-nanometre grid. Other shapes (non-Manhattan, non-convex), and Manhattan openings too complex for that lattice, are sampled on a lattice of 1/5 of their mean width (2 × area / perimeter, at most 4,096 nodes), and the narrowest and widest disk centres found there are then refined on the exact distance to the edges; on a curved non-convex test shape (an annulus drawn as 128-gons) this lands within 2 % of the analytic width. The step used is reported with each opening. Known limit of the sampled lattice: a short narrow stub only one or two lattice steps wide can be missed, so the reported narrowest width of such an opening can be too large and its aspect ratio too small (on random unions of two to four trenches measured this way, about one opening in eight was more than 1 % off, the worst by 4×). Openings whose width was sampled say so (widthExact false); check their narrow parts by hand.',
    'Polygonised circles: a convex opening drawn as a regular polygon of 16 or more corners, all on one circle within the drawing grid tolerance (each corner within √2 grid steps of the mean radius; the grid is the largest step that divides all its coordinates, at least one database unit), is measured as the diameter of that circle, not as its inscribed disk: a 5 µm via drawn as a 32-gon measures 5 µm, not 4.976 µm. The stated diameter is within 2√2 grid steps (2.8 nm on a 1 nm grid) of the drawn one. A polygon drawn around its circle (edges touching it) measures 1/cos(180°/N) larger than that circle (0.5 % at N = 32); octagons and coarser polygons keep their inscribed width.',
    'Classes, first match wins: open field if the largest inscribed width is at least 100 µm; trench if its length (the larger of area / width and the longest bounding-box side) is at least 3 widths; round hole if its area is 0.97–1.08 times that of its largest inscribed disk and its width is at least 0.9 of the largest inscribed width; square hole if its perimeter is within 2 % of a rectangle\'s of the same width and area; otherwise irregular.',
    'The local width map gives, for each pixel inside an opening, the width of the opening there (0 outside openings).',
    'For the etch model, holes are treated as cylinders of that width, and trenches, open fields and irregular openings as long trenches of their smallest width: an open field is a very wide trench, and the narrowest part of an irregular opening lags most.',
  ],
  formulas: [
    { label: 'Aspect ratio', text: 'AR = depth / width  (hole: depth / diameter)' },
    { label: 'Aspect ratio needed for the target', text: 'AR_target = target depth / width' },
  ],
  sources: [
    { citation: 'Kiihamäki & Franssila, J. Vac. Sci. Technol. A 17, 2280 (1999): long trenches etch faster than holes of the same width', strength: 'published' },
    { citation: 'Class thresholds (100 µm open field, length ≥ 3 widths for a trench)', strength: 'common-practice' },
  ],
};

// implementedIn: lib/etch (transmission.ts, neutral-flux.ts, ion-flux.ts, rate.ts, loading.ts, depth-integrator.ts)
const etchModel: MethodSection = {
  id: 'etch-model',
  title: 'Etch model',
  body: [
    'Each opening is predicted separately. The etch rate at its bottom falls as it deepens (aspect-ratio dependent etching, "RIE lag") and with the open area around it and on the wafer (loading). Depth after the etch time follows from integrating the rate over depth.',
    'The model\'s parameters are recipe-specific and must be calibrated on the fab\'s own measured depths; the model records its calibration date and the width, aspect-ratio and density range it was calibrated on, and predictions outside that range are flagged.',
  ],
  formulas: [],
  sources: [],
  subsections: [
    {
      id: 'etch-model-transmission',
      title: 'Transmission of neutrals through the opening',
      body: [
        'K is the probability that a neutral entering the top of the opening (cosine-law directions, walls that scatter diffusely without sticking) reaches the bottom.',
        'Holes (cylinders) use Berman\'s closed form of Clausing\'s integral equation, good to 0.07 %. Note that tables indexed by L/R use L/R = 2·AR.',
        'Long trenches use a table computed from the slot integral equation (accurate to 5·10⁻⁵ relative for AR 0.001–205) and its large-AR form beyond. Hole formulas are a poor stand-in for trenches.',
      ],
      formulas: [
        {
          label: 'Hole (Berman), L in units of the radius, L = 2·AR',
          text: 'K = 1 + L²/4 − (L/4)√(L²+4) − [(8−L²)√(L²+4) + L³ − 16]² / [72L√(L²+4) − 288 ln(L+√(L²+4)) + 288 ln 2]',
        },
        { label: 'Long trench, large AR', text: 'K ≈ (ln AR + c) / AR,  c matched to the computed table at AR ≈ 205' },
      ],
      sources: [
        { citation: 'Clausing, Ann. Physik 12, 961 (1932)', strength: 'from-memory' },
        { citation: 'Berman, J. Appl. Phys. 36, 3356 (1965)', strength: 'from-memory' },
        { citation: 'Slot transmission table: Trenchant\'s numerical solution of the slot integral equation, checked against a Monte Carlo simulation', strength: 'computed' },
      ],
    },
    {
      id: 'etch-model-bottom-flux',
      title: 'Reactive neutral flux at the bottom',
      body: ['A balance of the flux entering, the flux reacting at the bottom with probability S and the unreacted flux escaping gives the bottom flux relative to the open field. S → 0 gives no lag; S = 1 gives K.'],
      formulas: [{ label: 'Bottom neutral flux ratio', text: 'Γ_bottom / Γ_top = K / (K + S(1 − K))', where: ['S: reaction probability at the bottom (model field reactionProbability)'] }],
      sources: [{ citation: 'Coburn & Winters, Appl. Phys. Lett. 55, 2730 (1989)', strength: 'from-memory' }],
    },
    {
      id: 'etch-model-ions',
      title: 'Ion-enhanced etching (optional)',
      body: [
        'With an ion block the directly arriving ion flux at the bottom is limited by the opening\'s acceptance angle (line of sight; no charging, no wall scattering). σ is the standard deviation of one projected angle component.',
        'Neutral and ion supply combine in series, so the slower supply limits the rate: r → 0 gives the neutral-limited case, r → ∞ the ion-limited one.',
      ],
      formulas: [
        { label: 'Trench, bottom centre', text: 'Φ_i = erf(θa / (√2·σ)),  θa = atan(w / 2h)' },
        { label: 'Hole, bottom centre (cosⁿθ, n = 1/σ²)', text: 'Φ_i = 1 − cos^(n+1) θa,  θa = atan(D / 2h)' },
        { label: 'Combined rate ratio', text: 'R / R_open = (1 + r) / (1/Φ_n + r/Φ_i)', where: ['Φ_n: neutral ratio', 'Φ_i: ion ratio', 'r: neutral-to-ion supply ratio on the open field'] },
      ],
      sources: [
        { citation: 'Gottscho, Jurgensen & Vitkavage, J. Vac. Sci. Technol. B 10, 2133 (1992): review of microscopic uniformity and rate forms', strength: 'from-memory' },
        { citation: 'Incropera & DeWitt, Fundamentals of Heat and Mass Transfer; Siegel & Howell, Thermal Radiation Heat Transfer: view factors used to check the cosine-law limit', strength: 'published' },
      ],
    },
    {
      id: 'etch-model-loading',
      title: 'Loading',
      body: [
        'Global loading lowers the rate everywhere as more of the wafer is exposed; Trenchant passes the die\'s global density as the exposed fraction, which assumes the wafer is covered with copies of this die. Local microloading lowers the rate with the effective density at the opening\'s centroid.',
      ],
      formulas: [
        { label: 'Reciprocal form (default)', text: 'R = R₀ / (1 + Φ·A + κ·ρ_eff)', where: ['Φ: global coefficient', 'A: exposed wafer fraction', 'κ: local coefficient', 'ρ_eff: effective density'] },
        { label: 'Linear form', text: 'R = R₀ · (1 − κ·ρ_eff − Φ·A)' },
      ],
      sources: [
        { citation: 'Mogab, J. Electrochem. Soc. 124, 1262 (1977): global loading, 1/R linear in etched area', strength: 'from-memory' },
        { citation: 'Hedlund, Blom & Berg, J. Vac. Sci. Technol. A 12, 1962 (1994)', strength: 'published' },
      ],
    },
    {
      id: 'etch-model-cyclic',
      title: 'Time-multiplexed (cyclic) etching',
      body: [
        'In cyclic mode each cycle is a passivation step then an etch step. The depth gained in a cycle is the open-field depth per cycle times the ARDE and loading factors at the depth reached at the start of that cycle; with small cycles this approaches the continuous model.',
        'Scallop depth is an estimate: each etch step is assumed to undercut the sidewall along a circular arc whose radius is the lateral-to-vertical ratio times that cycle\'s depth. Real scallops depend on passivation breakthrough and ion angular spread; measure them by SEM.',
      ],
      formulas: [
        { label: 'Depth per cycle', text: 'h_(k+1) = h_k + d₀ · R(h_k) / R_open', where: ['d₀: open-field depth per cycle (µm)'] },
        { label: 'Scallop (sagitta of the undercut arc)', text: 's = ℓ − √(ℓ² − (d/2)²) for ℓ ≥ d/2, else s = ℓ;  ℓ = lateral-to-vertical ratio × d' },
      ],
      sources: [{ citation: 'Laermer & Schilp, US patent 5,501,893: alternating passivation and etch steps', strength: 'published' }],
    },
    {
      id: 'etch-model-stop-and-mask',
      title: 'Stop layer and mask',
      body: [
        'With a stop layer, an opening that reaches it keeps etching into it for the rest of the etch time at the rate at the stop depth divided by the stop layer\'s selectivity. That depth is the over-etch checked against the stop budget; an over-etch deeper than the stop layer is reported as a break-through.',
        'With a mask, the mask on the field erodes at the field\'s loaded rate divided by the mask selectivity; the mask left at the end of the etch is reported, and a mask consumed before the end is a model warning.',
      ],
      formulas: [
        { label: 'Over-etch into the stop layer', text: 'o = (T − t_stop) · R(h_stop) / S_stop' },
        { label: 'Mask remaining', text: 'm = max(0, m₀ − R_field · T / S_mask)' },
      ],
      sources: [{ citation: 'Notching and footing at an oxide stop layer; mask erosion over large exposed areas', strength: 'common-practice' }],
    },
    {
      id: 'etch-model-depth',
      title: 'Depth over time',
      body: [
        'The local rate depends on the depth reached (through AR), so the time to a depth is the integral of 1/R over depth, computed by adaptive Gauss–Kronrod quadrature; the depth at the etch time is found by a safeguarded Newton iteration.',
        'An opening stops where the rate falls below the model\'s stop fraction of the open-field rate, or at the model\'s maximum aspect ratio.',
      ],
      formulas: [
        { label: 'Time to depth', text: 't(h) = ∫₀ʰ dh′ / R(h′ / w, ρ_eff)' },
        { label: 'Check (K = 1/(1 + a·AR), S = 1, constant R₀)', text: 't(h) = (h + a·h² / 2w) / R₀' },
      ],
      sources: [{ citation: 'Laermer & Schilp, US patent 5,501,893: time-multiplexed deep silicon etching', strength: 'published' }],
    },
  ],
};

// implementedIn: lib/pipeline/predict-features.ts
const prediction: MethodSection = {
  id: 'prediction',
  title: 'Predicting each opening',
  body: [
    'Every opening is sent to the process model with its kind (hole or trench, see "Openings and their width"), its width, the effective density at its centroid and the die\'s global density as exposed fraction.',
    'The effective density is rounded to 0.0001 before prediction, so openings of equal width in equal surroundings are computed once; this is far below any model\'s accuracy.',
    'Margin is predicted depth minus target depth. When the model has a stop layer, over-etch is the depth etched into the stop layer after an opening reaches it: the rate at the stop depth divided by the stop layer\'s selectivity, times the remaining etch time. Without a stop layer over-etch is 0 and depth beyond target + tolerance is reported as a model warning.',
    'The target depth and tolerance of the analysis (from the model unless set) are the ones used for margins, "reaches target" and the flags, so these always agree.',
  ],
  formulas: [{ label: 'Margin', text: 'margin = depth − target depth' }],
  sources: [],
};

// implementedIn: lib/pipeline/flags.ts, lib/pipeline/result-maps.ts
const flagRules: MethodSection = {
  id: 'flag-rules',
  title: 'Flags',
  body: [
    'A flag is raised only when its limit is strictly crossed; a value equal to the limit passes. Each flag carries its kind, severity, location, the measured value, the limit and a plain-language explanation.',
    'Under target depth (error): the predicted depth is below target − tolerance.',
    'Over-etch beyond the stop budget (error): the predicted over-etch exceeds the stop-layer budget. Checked only when a budget is set.',
    'Aspect ratio above limit (error): the aspect ratio needed to reach the target, target depth / width, exceeds the process\'s maximum aspect ratio (from the model unless set).',
    'Width below the rule minimum (error): the opening\'s width is below the minimum width rule. Checked only when a rule is set.',
    'Window density below minimum / above maximum (error): a density window\'s value is outside the limits. Neighbouring offending windows form one flag whose box covers them all and whose measured value and point are those of the worst window.',
    'Density gradient above limit (warning): two neighbouring windows differ by more than the limit. Neighbouring offending windows form one flag, placed between the worst pair.',
    'Outside the calibrated range (warning): the opening\'s width, predicted aspect ratio or effective density lies outside the range the model was calibrated on, so its prediction is an extrapolation.',
    'Severity: errors are predicted failures against a stated target or rule; warnings need a look but are not predicted failures; info is available for limits that are only guidelines. Any kind\'s severity can be set per analysis, for example to treat a recommended density limit as a warning, as rule decks distinguish required, recommended and guideline rules.',
    'Flags are listed worst first: errors, then warnings, then info, and within each by how far beyond its limit (relative to the limit) the value lies. At most 10,000 flags are listed by default; the counts by kind and severity always include every flag.',
    'Risk map: each opening gets a score, the largest of (target − tolerance)/depth, (target + over-etch)/(target + stop budget), (target/width)/maximum aspect ratio and minimum width/width, each equal to 1 exactly at its flag\'s limit; the score is capped at 10. A pixel takes the score of the smallest opening whose bounding box contains it.',
  ],
  formulas: [
    { label: 'Under target', text: 'depth < target − tolerance' },
    { label: 'Over-etch', text: 'depth etched into the stop layer > stop budget' },
    { label: 'Aspect ratio', text: 'target / width > maximum aspect ratio' },
    { label: 'Risk score', text: 'risk = min(10, max((T − tol)/d, (T + o)/(T + b), (T/w)/AR_max, w_min/w))' },
  ],
  sources: [{ citation: 'Required / recommended / guideline rule strengths in rule decks', strength: 'common-practice' }],
};

// implementedIn: lib/pipeline/grid-file.ts
const resultMaps: MethodSection = {
  id: 'result-maps',
  title: 'Result maps',
  body: [
    'Maps are stored as single-precision rasters with their geometry (lower-left corner, pixel size, size in pixels), kind and unit: coverage (fraction), window density for each window set (fraction; one pixel per window, centred on the window\'s centre, pixel size = step), effective density (fraction), local width (µm), aspect ratio (predicted depth / width), predicted depth (µm), risk (score) and, for a model calibrated with a parameter covariance, depth uncertainty (µm, one standard deviation of the predicted depth from the fitted parameters; 95 % band = ±1.96 σ).',
    'Pixels with no opening hold "no value" in the aspect-ratio, depth and risk maps.',
  ],
  formulas: [],
  sources: [],
};

const cautions: MethodSection = {
  id: 'cautions',
  title: 'Cautions',
  body: [...CAUTIONS],
  formulas: [],
  sources: [],
};

export const METHOD_SECTIONS: readonly MethodSection[] = [openArea, densityWindows, effectiveDensity, featuresAndWidth, etchModel, prediction, flagRules, resultMaps, cautions];

/** Find a section (or subsection) by id. */
export function methodSection(id: string): MethodSection | undefined {
  const walk = (list: readonly MethodSection[]): MethodSection | undefined => {
    for (const s of list) {
      if (s.id === id) return s;
      const inner = s.subsections ? walk(s.subsections) : undefined;
      if (inner) return inner;
    }
    return undefined;
  };
  return walk(METHOD_SECTIONS);
}
