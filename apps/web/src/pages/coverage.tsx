import { useEffect, useState } from 'preact/hooks';
import {
  patch,
  type CalibrationStatus,
  type CoveragePreview,
  type Desk,
  type PreviewPoint,
  type UpdatedDesk,
} from '../api';
import { useData, type PageProps } from '../app';
import { LineChart } from '../components/charts';
import { CALIBRATION_TRADE_OFF } from '../components/desk-form';
import { CoverageAlert } from '../components/coverage-alert';
import { num, pct } from '../format';
import { Reading } from '../components/reading';
import { CALL_READINGS, meanSetSizeReading, targetReading } from '../readings';

const TICKS_X = [0.5, 0.6, 0.7, 0.8, 0.9, 0.99];
const pctTick = (v: number) => `${Math.round(v * 100)}`;

/**
 * The coverage control: a target slider over the preview curve of what each
 * target would mean for the pool, and the calibration mode. Applying a new
 * target changes every item's set at once; no retraining.
 */
export function CoveragePage({ params }: PageProps) {
  const deskId = params.deskId;
  const [desk, deskError, reloadDesk] = useData<Desk>(`/desks/${deskId}`);
  const [preview, previewError, reloadPreview] = useData<CoveragePreview>(`/desks/${deskId}/coverage-preview`);
  const [target, setTarget] = useState<number | null>(null);
  const [status, setStatus] = useState<CalibrationStatus | null>(null);
  const [message, setMessage] = useState<string | null>(null);
  const [error, setError] = useState<string | null>(null);

  useEffect(() => {
    if (desk && target === null) setTarget(Math.min(0.99, Math.round(desk.coverageTarget * 100) / 100));
  }, [desk]);

  // Open items that no set describes (none left, or none scored yet) would draw an all-zero preview: say so instead.
  const described = (preview?.points ?? []).some((p) => p.sureShare + p.ambiguousShare + p.unfamiliarShare > 0);
  const points = described ? (preview?.points ?? []) : [];
  const t = target ?? 0.9;
  const at = points.find((p) => Math.abs(p.target - t) < 1e-9) ?? null;

  const apply = async (body: Record<string, unknown>) => {
    setError(null);
    try {
      const res = await patch<UpdatedDesk>(`/desks/${deskId}`, body);
      setStatus(res.calibrationStatus ?? null);
      setMessage(
        `Applied at ${new Date().toLocaleTimeString('en-GB')}: every item's prediction set now follows the new setting.`,
      );
      reloadDesk();
      reloadPreview();
    } catch (e) {
      setError((e as Error).message);
    }
  };

  return (
    <section class="page">
      <h1>Coverage</h1>
      {(deskError || previewError) && (
        <p class="error" role="alert">
          {deskError ?? previewError}
        </p>
      )}
      <CoverageAlert deskId={deskId} refresh={desk?.coverageTarget} />
      <p class="lead">
        The coverage target is how often the prediction set must hold the right category, over items drawn at random
        from the pool. A higher target gives fewer <em>sure</em> calls and larger sets; a lower one more sure calls that
        are wrong more often.
      </p>
      {desk && (
        <div class="coverage-control">
          <label class="slider">
            <span>
              Target: <strong>{pct(t)}</strong>{' '}
              {desk.coverageTarget !== t && <span class="muted">(in force: {pct(desk.coverageTarget, 1)})</span>}
            </span>
            <input
              type="range"
              min="0.5"
              max="0.99"
              step="0.01"
              value={t}
              aria-valuetext={pct(t)}
              onInput={(e) => setTarget(Number(e.currentTarget.value))}
            />
          </label>
          <div class="readout" aria-live="polite" data-target={t}>
            {!preview?.modelVersion && (
              <p>No model version yet: the preview appears once the first model is published.</p>
            )}
            {preview?.modelVersion != null && !described && (
              <p class="not-enough">
                Not enough data yet: version {preview.modelVersion} describes no open item
                {preview.items === 0 ? ' (every item is decided or held)' : ''}, so there is nothing to preview. The
                preview appears once open items have been scored.
              </p>
            )}
            {at && described && (
              <p>
                At {pct(t)}: <strong class="sure-share">{pct(at.sureShare)}</strong> of open items would be sure,{' '}
                {pct(at.ambiguousShare)} ambiguous and {pct(at.unfamiliarShare)} unfamiliar; the mean set size would be{' '}
                <strong class="mean-size">{num(at.meanSetSize)}</strong>. {calibrationLine(at)}
              </p>
            )}
            {at && (
              <ul class="readings-list">
                <li>
                  <Reading text={`Target: ${targetReading(t)}.`} />
                </li>
                <li>
                  <Reading
                    text={`${capital(CALL_READINGS.sure)}; ${CALL_READINGS.ambiguous}; ${CALL_READINGS.unfamiliar}.`}
                  />
                </li>
                <li>
                  <Reading text={`Mean set size: ${meanSetSizeReading(at.meanSetSize)}.`} />
                </li>
              </ul>
            )}
          </div>
          <button
            type="button"
            class="primary"
            disabled={desk.coverageTarget === t}
            onClick={() => void apply({ coverageTarget: t })}
          >
            Apply {pct(t)}
          </button>
        </div>
      )}
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {message && (
        <p class="notice" role="status">
          {message}
          {status && status.needMore > 0
            ? ` The calibration set is too small for this target: ${status.needMore} more verdicts on random draws are needed; until then the sets hold every category.`
            : ''}
        </p>
      )}
      {points.length > 0 && (
        <div class="chart-pair">
          <LineChart
            summary={`Share of sure, ambiguous and unfamiliar calls for targets 50 to 99 %; at ${pct(t)} ${at ? pct(at.sureShare) : '–'} sure.`}
            xLabel="coverage target (%)"
            yLabel="share of open items (%)"
            x={[0.5, 0.99]}
            y={[0, 1]}
            xTicks={TICKS_X}
            yTicks={[0, 0.25, 0.5, 0.75, 1]}
            xFormat={pctTick}
            yFormat={pctTick}
            marker={t}
            series={[
              { name: 'sure', className: 's-sure', points: points.map((p) => [p.target, p.sureShare]) },
              { name: 'ambiguous', className: 's-ambiguous', points: points.map((p) => [p.target, p.ambiguousShare]) },
              {
                name: 'unfamiliar',
                className: 's-unfamiliar',
                points: points.map((p) => [p.target, p.unfamiliarShare]),
              },
            ]}
          />
          <LineChart
            summary={`Mean prediction-set size for targets 50 to 99 %; at ${pct(t)} ${at ? num(at.meanSetSize) : '–'}.`}
            xLabel="coverage target (%)"
            yLabel="mean set size (categories)"
            x={[0.5, 0.99]}
            y={[0, Math.max(1, desk?.categories.length ?? 1)]}
            xTicks={TICKS_X}
            yTicks={Array.from({ length: (desk?.categories.length ?? 1) + 1 }, (_, i) => i)}
            xFormat={pctTick}
            marker={t}
            series={[
              { name: 'mean set size', className: 's-size', points: points.map((p) => [p.target, p.meanSetSize]) },
            ]}
          />
        </div>
      )}
      {desk && (
        <fieldset class="calibration-mode">
          <legend>Calibration</legend>
          {(['per-category', 'marginal'] as const).map((m) => (
            <label class="radio">
              <input
                type="radio"
                name="mode"
                checked={desk.calibration === m}
                onChange={() => void apply({ calibration: m })}
              />{' '}
              {CALIBRATION_TRADE_OFF[m]}
            </label>
          ))}
        </fieldset>
      )}
    </section>
  );
}

function calibrationLine(p: PreviewPoint): string {
  const base = `The threshold rests on ${p.calibrationCount} calibration verdicts from random draws (per category: the smallest category's count).`;
  return p.needMore > 0
    ? `${base} That is too few for this target: ${p.needMore} more random verdicts are needed.`
    : base;
}

const capital = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);
