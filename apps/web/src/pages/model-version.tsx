import type { Coverage, CoveragePreview, Desk, ModelVersion } from '../api';
import { useData, type PageProps } from '../app';
import { BarChart, IntervalChart, LineChart } from '../components/charts';
import { count, num, pct, shareInterval, TOO_FEW, when } from '../format';
import { TooFew } from '../components/too-few';
import { TableBox } from '../components/table-box';
import { Reading } from '../components/reading';
import {
  accuracyReading,
  brierReading,
  coverageReading,
  eceReading,
  logLossReading,
  macroF1Reading,
  targetReading,
} from '../readings';

/** One model version for oversight: what it promised, what it achieved on random checks, its set sizes and its calibration quality. */
export function ModelVersionPage({ params }: PageProps) {
  const { deskId, version } = params as { deskId: string; version: string };
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const [m, error] = useData<ModelVersion>(`/desks/${deskId}/models/${version}`);
  const [coverage] = useData<Coverage>(`/desks/${deskId}/coverage`);
  const [preview] = useData<CoveragePreview>(`/desks/${deskId}/coverage-preview`);
  const categories = desk?.categories.map((c) => c.name) ?? [];
  const realized = coverage?.byVersion.find((v) => v.modelVersion === Number(version)) ?? null;
  const isCurrent = desk?.currentModelVersion === Number(version);
  const point =
    isCurrent && preview
      ? preview.points.find((p) => Math.abs(p.target - Math.min(0.99, desk.coverageTarget)) < 0.005)
      : undefined;
  const reliability = (m?.metrics?.reliability ?? []).filter(
    (b) => b.count > 0 && b.meanConfidence !== null && b.accuracy !== null,
  );

  return (
    <section class="page">
      <p>
        <a href={`/desks/${deskId}/models`}>← All model versions</a>
      </p>
      <h1>Model version {version}</h1>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {m && (
        <>
          <p class="lead">
            {m.state === 'published' ? `Published ${when(m.publishedAt)}` : `State: ${m.state}`}
            {m.parentVersion ? `, after version ${m.parentVersion}` : ', the first version'}.
            {coverage &&
              ` Promised coverage now: ${pct(coverage.target, 1)} (${coverage.mode === 'per-category' ? 'per category' : 'over the pool'}).`}
            {coverage && (
              <>
                {' '}
                <Reading text={`Read: ${targetReading(coverage.target)}.`} />
              </>
            )}
          </p>
          <section>
            <h2>Verdicts behind it</h2>
            <TableBox label="Verdicts behind it">
              <table class="data">
                <thead>
                  <tr>
                    <th>Category</th>
                    <th class="num">Training verdicts</th>
                    <th class="num">Calibration verdicts (random draws)</th>
                    {m.thresholds && m.thresholds.mode === 'per-category' && <th class="num">Threshold at target</th>}
                  </tr>
                </thead>
                <tbody>
                  {categories.map((c) => {
                    const t = m.thresholds?.thresholds.find((x) => x.category === c);
                    return (
                      <tr>
                        <td>{c}</td>
                        <td class="num">{count(m.training.counts[c] ?? 0)}</td>
                        <td class="num">{count(m.calibration.counts[c] ?? 0)}</td>
                        {m.thresholds?.mode === 'per-category' && (
                          <td class="num">
                            {t?.threshold === null || t === undefined
                              ? 'every category (too few)'
                              : num(t.threshold, 3)}
                          </td>
                        )}
                      </tr>
                    );
                  })}
                </tbody>
              </table>
            </TableBox>
            {m.thresholds?.mode === 'per-category' && (
              <p>
                <Reading text="Threshold at target: the highest nonconformity score (how little an item looks like the category) still let into the set; a category whose score is above it is ruled out." />
              </p>
            )}
            {m.thresholds && m.thresholds.needMore > 0 && (
              <p class="warning">
                At the current target the calibration set is too small: {m.thresholds.needMore} more random verdicts are
                needed; until then sets hold every category.
              </p>
            )}
          </section>
          <section>
            <h2>Promised and realized coverage</h2>
            {!realized && <p class="muted">No random check has been decided under this version yet.</p>}
            {realized && coverage && (
              <>
                <p>
                  Over the {count(realized.n)} random check{realized.n === 1 ? '' : 's'} decided under this version the
                  set held the reviewer's answer {pct(realized.coverage, 1)} of the time (95 % Wilson interval{' '}
                  {pct(realized.interval?.lower, 1)} to {pct(realized.interval?.upper, 1)}).{' '}
                  <Reading text={`Read: ${coverageReading(realized.coverage, coverage.target)}.`} />
                </p>
                <IntervalChart
                  target={coverage.target}
                  summary={`Realized coverage of version ${version}, overall and per category, against the promised ${pct(coverage.target)}.`}
                  rows={[
                    {
                      label: 'all categories',
                      value: realized.coverage,
                      lower: realized.interval?.lower ?? null,
                      upper: realized.interval?.upper ?? null,
                      n: realized.n,
                    },
                    ...Object.entries(realized.perCategory).map(([c, s]) => ({
                      label: c,
                      value: s.coverage,
                      lower: s.interval?.lower ?? null,
                      upper: s.interval?.upper ?? null,
                      n: s.n,
                    })),
                  ]}
                />
              </>
            )}
          </section>
          <section>
            <h2>Set sizes over the open pool</h2>
            {!isCurrent && (
              <p class="muted">
                Set sizes over the pool are kept for the version in service; this version's are in its report.
              </p>
            )}
            {point?.setSizes && (
              <BarChart
                unit="open items"
                summary={`Open items by prediction-set size at ${pct(desk!.coverageTarget)}: ${point.setSizes.map((n, i) => `${i} categories ${n}`).join(', ')}.`}
                bars={point.setSizes.map((n, size) => ({
                  label: size === 0 ? '0 (unfamiliar)' : size === 1 ? '1 (sure)' : `${size} (ambiguous)`,
                  value: n,
                  className: size === 0 ? 'call-unfamiliar' : size === 1 ? 'call-sure' : 'call-ambiguous',
                }))}
              />
            )}
          </section>
          {m.metrics && (
            <section>
              <h2>
                Quality on the calibration set (n = {m.metrics.n}) <TooFew n={m.metrics.n} of="calibration verdicts" />
              </h2>
              {m.metrics.n < TOO_FEW && (
                <p class="muted too-few-note">
                  Fewer than {TOO_FEW} calibration verdicts: these figures can move a long way with a handful more. Read
                  accuracy through its interval; the others have none here and are rough.
                </p>
              )}
              <dl class="figures">
                <div>
                  <dt>Accuracy</dt>
                  <dd>
                    {num(m.metrics.accuracy, 3)}
                    {(() => {
                      const ci = shareInterval(m.metrics.accuracy, m.metrics.n);
                      return (
                        ci && (
                          <span class="interval">
                            {' '}
                            (95 % interval {num(ci.lower, 2)} to {num(ci.upper, 2)})
                          </span>
                        )
                      );
                    })()}{' '}
                    <Reading text={accuracyReading(m.metrics.accuracy)} />
                  </dd>
                </div>
                <div>
                  <dt>Macro-F1</dt>
                  <dd>
                    {num(m.metrics.macroF1, 3)} <Reading text={macroF1Reading(m.metrics.macroF1)} />
                  </dd>
                </div>
                <div>
                  <dt>Log loss</dt>
                  <dd>
                    {num(m.metrics.logLoss, 3)} <Reading text={logLossReading(m.metrics.logLoss, categories.length)} />
                  </dd>
                </div>
                <div>
                  <dt>Brier score</dt>
                  <dd>
                    {num(m.metrics.brier, 3)} <Reading text={brierReading(m.metrics.brier)} />
                  </dd>
                </div>
                <div>
                  <dt>Expected calibration error</dt>
                  <dd>
                    {num(m.metrics.ece, 3)} <Reading text={eceReading(m.metrics.ece)} />
                  </dd>
                </div>
              </dl>
              {reliability.length > 0 && (
                <LineChart
                  summary="Reliability diagram: accuracy against mean confidence per confidence bin; the diagonal is perfect calibration."
                  xLabel="mean confidence of the top category"
                  yLabel="share correct"
                  x={[0, 1]}
                  y={[0, 1]}
                  xTicks={[0, 0.2, 0.4, 0.6, 0.8, 1]}
                  yTicks={[0, 0.2, 0.4, 0.6, 0.8, 1]}
                  series={[
                    {
                      name: 'perfect calibration',
                      className: 's-diagonal',
                      points: [
                        [0, 0],
                        [1, 1],
                      ],
                    },
                    {
                      name: 'this version (per bin)',
                      className: 's-reliability',
                      points: reliability.map((b) => [b.meanConfidence!, b.accuracy!]),
                    },
                  ]}
                />
              )}
            </section>
          )}
        </>
      )}
    </section>
  );
}
