import { widthRulesToCsv } from '@/lib/etch';
import { widthRulesQuery } from '@/lib/models/schemas';
import { versionTableRoute } from '@/lib/models/version-table-route';
import { widthTable } from '@/lib/models/width-table';

export const runtime = 'nodejs';
export const dynamic = 'force-dynamic';

/**
 * Width-rule table of a version: `?kind=trench|hole&targetDepthUm=&toleranceUm=&density=&format=json|csv` —
 * width, predicted depth (± σ when calibrated), aspect ratio, margin, pass/fail and the minimum width reaching the
 * target (members).
 */
export const GET = versionTableRoute('width-rules', widthRulesQuery, (model, q) => widthTable(model, q), widthRulesToCsv);
