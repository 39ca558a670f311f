import type { Coverage } from '../api';
import { useData } from '../app';
import { pct } from '../format';
import { coverageReading } from '../readings';
import { Reading } from './reading';

/**
 * The coverage alert in plain words, when the realized coverage of recent random checks falls clearly below the
 * promise. `refresh`: read again whenever it changes (the target in force, so the promise follows an applied target).
 */
export function CoverageAlert({
  deskId,
  coverage,
  refresh,
}: {
  deskId: string;
  coverage?: Coverage | null;
  refresh?: unknown;
}) {
  const [loaded] = useData<Coverage>(coverage === undefined ? `/desks/${deskId}/coverage` : null, [refresh]);
  const c = coverage ?? loaded;
  if (!c) return null;
  if (c.alert.raised) {
    return (
      <div class="alert" role="alert">
        <h2>Coverage alert</h2>
        <p>{c.alert.message}</p>
        <p class="muted">
          What to do: keep serving random draws (they recalibrate the next versions), read sure calls with care, and
          look at what is new in the recent imports.
        </p>
      </div>
    );
  }
  if (c.window.n === 0) return null;
  return (
    <p class="coverage-ok">
      Realized coverage over the last {c.window.n} random checks: <strong>{pct(c.window.coverage, 1)}</strong> (95 %
      interval {pct(c.window.interval?.lower ?? null, 1)} to {pct(c.window.interval?.upper ?? null, 1)}), promised{' '}
      {pct(c.target, 1)}. <Reading text={`Read: ${coverageReading(c.window.coverage, c.target)}.`} />
    </p>
  );
}
