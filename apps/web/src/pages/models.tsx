import type { ModelList, ReportList } from '../api';
import { useData, type PageProps } from '../app';
import { count, num, TOO_FEW, when } from '../format';
import { TooFew } from '../components/too-few';
import { TableBox } from '../components/table-box';
import { accuracyReading, brierReading, eceReading, logLossReading, macroF1Reading } from '../readings';

const sum = (r: Record<string, number>) => Object.values(r).reduce((a, b) => a + b, 0);

/** Every model version of the desk with its figures; read-only. */
export function ModelsPage({ params }: PageProps) {
  const deskId = params.deskId;
  const [data, error] = useData<ModelList>(`/desks/${deskId}/models`);
  const [reports] = useData<ReportList>(`/desks/${deskId}/reports`);
  const report = (v: number) => reports?.reports.find((r) => r.version === v);
  return (
    <section class="page">
      <h1>Model versions</h1>
      <p class="lead">
        Each version is trained on verdicts of non-random draws and calibrated on verdicts of random draws only; it
        never changes once published. Quality figures are measured on its calibration set.
      </p>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {data && data.models.length === 0 && (
        <p class="empty">
          No model version yet. The first one is trained once every category has two training verdicts.
        </p>
      )}
      {data && data.models.length > 0 && (
        <TableBox label="Model versions">
          <table class="data models-table">
            <thead>
              <tr>
                <th>Version</th>
                <th>State</th>
                <th>Published</th>
                <th class="num">Trained on</th>
                <th class="num">Calibrated on</th>
                <th class="num">Accuracy</th>
                <th class="num">Macro-F1</th>
                <th class="num">Log loss</th>
                <th class="num">Brier</th>
                <th class="num">ECE</th>
                <th>Oversight report</th>
              </tr>
            </thead>
            <tbody>
              {data.models.map((m) => (
                <tr>
                  <td>
                    <a href={`/desks/${deskId}/models/${m.version}`}>v{m.version}</a>
                    {m.version === data.currentModelVersion && <span class="tag">current</span>}
                  </td>
                  <td>{m.state}</td>
                  <td>{when(m.publishedAt)}</td>
                  <td class="num">{count(sum(m.trainingCounts))}</td>
                  <td class="num">
                    {count(sum(m.calibrationCounts))}
                    {m.metrics && <TooFew n={m.metrics.n} of="calibration verdicts" />}
                  </td>
                  <td class="num">{num(m.metrics?.accuracy, 3)}</td>
                  <td class="num">{num(m.metrics?.macroF1, 3)}</td>
                  <td class="num">{num(m.metrics?.logLoss, 3)}</td>
                  <td class="num">{num(m.metrics?.brier, 3)}</td>
                  <td class="num">{num(m.metrics?.ece, 3)}</td>
                  <td>
                    <ReportLinks deskId={deskId} version={m.version} status={report(m.version)?.status} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
      {data && data.models.some((m) => m.metrics && m.metrics.n < TOO_FEW) && (
        <p class="muted">
          A version marked “too few” was measured on fewer than {TOO_FEW} calibration verdicts: its figures can move a
          long way with a handful more, so read them as rough. Its page gives accuracy with its 95 % interval.
        </p>
      )}
      {data && data.models.length > 0 && <MetricReadings data={data} />}
    </section>
  );
}

/** The columns in words, read on the current version's figures (the newest measured one when none is current). */
function MetricReadings({ data }: { data: ModelList }) {
  const m =
    data.models.find((x) => x.version === data.currentModelVersion && x.metrics) ?? data.models.find((x) => x.metrics);
  if (!m?.metrics) return null;
  const k = Object.keys(m.calibrationCounts).length;
  return (
    <section class="metric-readings">
      <h2>
        How to read the figures (version {m.version}) <TooFew n={m.metrics.n} of="calibration verdicts" />
      </h2>
      <dl class="readings">
        <div>
          <dt>Accuracy {num(m.metrics.accuracy, 3)}</dt>
          <dd>{accuracyReading(m.metrics.accuracy)}.</dd>
        </div>
        <div>
          <dt>Macro-F1 {num(m.metrics.macroF1, 3)}</dt>
          <dd>{macroF1Reading(m.metrics.macroF1)}.</dd>
        </div>
        <div>
          <dt>Log loss {num(m.metrics.logLoss, 3)}</dt>
          <dd>{logLossReading(m.metrics.logLoss, k)}.</dd>
        </div>
        <div>
          <dt>Brier {num(m.metrics.brier, 3)}</dt>
          <dd>{brierReading(m.metrics.brier)}.</dd>
        </div>
        <div>
          <dt>ECE {num(m.metrics.ece, 3)}</dt>
          <dd>{eceReading(m.metrics.ece)}.</dd>
        </div>
      </dl>
    </section>
  );
}

function ReportLinks({ deskId, version, status }: { deskId: string; version: number; status?: string }) {
  if (status === 'ready') {
    return (
      <>
        <a href={`/api/desks/${deskId}/models/${version}/report.html`} target="_blank" rel="noopener">
          HTML
        </a>{' '}
        ·{' '}
        <a href={`/api/desks/${deskId}/models/${version}/report.json`} download>
          JSON
        </a>
      </>
    );
  }
  if (status === 'failed') return <span class="bad">could not be written</span>;
  if (status === 'writing' || status === 'pending') return <span class="muted">being written</span>;
  return <span class="muted">–</span>;
}
