import type { Prevalence } from '#models';
import type { PrevalenceSection } from '../report-figures.js';

/**
 * The report's prevalence section from the prevalence of the desk's items
 * by week of posting (`PrevalenceService`, the figures of
 * `GET /prevalence?period=week`), in the report's category order, with the
 * time they were computed.
 */
export function prevalenceSection(p: Prevalence, asOf: Date): PrevalenceSection {
  return {
    asOf: asOf.toISOString(),
    modelVersion: p.modelVersion,
    period: p.period,
    by: p.by,
    method: p.method,
    approximation: p.approximation,
    undated: p.undated,
    periods: p.periods.map((x) => ({
      start: x.start,
      items: x.items,
      randomVerdicts: x.randomVerdicts,
      decided: x.decided,
      perCategory: p.categories.map((category) => {
        const c = x.perCategory[category];
        return {
          category,
          share: c.share,
          lower: c.lower,
          upper: c.upper,
          method: c.method,
          randomVerdicts: c.randomVerdicts,
        };
      }),
    })),
  };
}
