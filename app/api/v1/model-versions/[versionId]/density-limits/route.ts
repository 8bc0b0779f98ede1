import { densityLimitsToCsv } from '@/lib/etch';
import { densityLimitsQuery } from '@/lib/models/schemas';
import { versionTableRoute } from '@/lib/models/version-table-route';
import { densityTable } from '@/lib/models/width-table';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Density limits of a version: `?kind=trench|hole&targetDepthUm=&toleranceUm=&widthsUm=2,5,10&format=json|csv` —
 * per width the effective-density band keeping the depth within target ± tolerance, and depth over a density grid
 * (members).
 */
export const GET = versionTableRoute('density-limits', densityLimitsQuery, (model, q) => densityTable(model, q), densityLimitsToCsv);
