/**
 * Cautions shown with every result (Methods page, analysis page, reports, the check command). Wording follows the
 * project's domain notes section 5.
 */
export const CAUTIONS: readonly string[] = [
  'Predicted depths are estimates from simplified transport and loading models. Validate them against calibration wafers etched in your fab\'s process of record, and record the model version and calibration date with every report.',
  'The foundry\'s rule manual and sign-off deck take precedence over these checks. Density numbers change with the window origin, the denominator and the edge policy, so the method used is printed with every result.',
  'Predictions outside the calibrated width, aspect-ratio or density range are extrapolations and are flagged as such.',
  'Drawn dimensions are not final dimensions: etch bias and CD loss change the widths the process actually sees.',
  'Through-etch openings may notch or foot at a stop layer, and large exposed areas heat the wafer and erode the mask; neither is modelled in detail here.',
];

/** One short paragraph for places with little room (CLI footer, report header). */
export const CAUTION_SHORT =
  'Estimates only: validate against your fab\'s process of record; foundry rules take precedence; extrapolated predictions are flagged.';
