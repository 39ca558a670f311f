import { useState } from 'preact/hooks';
import {
  api,
  post,
  type Coverage,
  type Desk,
  type ModelList,
  type Progress,
  type Prevalence,
  type KeywordCounts,
  type SimulationStatus,
  type UrgentList,
} from '../api';
import { useData, useInterval, type PageProps } from '../app';
import { BarChart, LineChart, niceTicks } from '../components/charts';
import { CoverageAlert } from '../components/coverage-alert';
import { count, num, TOO_FEW, when } from '../format';
import { TableBox } from '../components/table-box';
import { Reading } from '../components/reading';
import { keywordPrecisionReading, keywordRecallReading, macroF1Reading } from '../readings';
import { TooFew } from '../components/too-few';

/** The supervisor's desk: progress, the learning curve, the coverage alert, exports, and the simulated reviewer. */
export function DeskOverview({ params }: PageProps) {
  const deskId = params.deskId;
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const [progress, progressError, reloadProgress] = useData<Progress>(`/desks/${deskId}/progress`);
  const [models, , reloadModels] = useData<ModelList>(`/desks/${deskId}/models`);
  const [coverage, , reloadCoverage] = useData<Coverage>(`/desks/${deskId}/coverage`);
  useInterval(() => {
    reloadProgress();
    reloadModels();
    reloadCoverage();
  }, 5000);

  const measured = (models?.models ?? [])
    .filter((m) => m.state === 'published' && m.metrics)
    .sort((a, b) => a.version - b.version);
  // Versions measured on too few calibration verdicts are drawn apart (hollow, dashed): macro-F1 on a handful of
  // items is mostly noise.
  const published = measured;
  const isRough = (m: (typeof measured)[number]) => m.metrics!.n < TOO_FEW;
  const rough = measured.filter(isRough);
  const f1Of = (m: (typeof measured)[number]) =>
    `v${m.version} ${num(m.metrics!.macroF1)}${isRough(m) ? ' (too few)' : ''}`;
  const maxVersion = Math.max(1, ...published.map((m) => m.version));

  return (
    <section class="page">
      <div class="page-head">
        <h1>{desk?.name ?? 'Desk'}</h1>
        <p class="muted">
          {models?.currentModelVersion ? `Serving model version ${models.currentModelVersion}` : 'No model version yet'}
          {desk ? ` · coverage target ${Math.round(desk.coverageTarget * 100)} % (${desk.calibration})` : ''}
        </p>
      </div>
      {progressError && (
        <p class="error" role="alert">
          {progressError}
        </p>
      )}
      {desk && (desk.role === 'supervisor' || desk.role === 'auditor') && (
        <UrgentItems deskId={deskId} canAcknowledge={desk.role === 'supervisor'} />
      )}
      <CoverageAlert deskId={deskId} coverage={coverage} />
      {progress && (
        <dl class="figures">
          <div>
            <dt>Items</dt>
            <dd>{count(progress.items.total)}</dd>
          </div>
          <div>
            <dt>Open</dt>
            <dd>{count(progress.items.open)}</dd>
          </div>
          <div>
            <dt>Being decided</dt>
            <dd>{count(progress.items.leased)}</dd>
          </div>
          <div>
            <dt>Decided</dt>
            <dd>{count(progress.items.decided)}</dd>
          </div>
          {progress.items.erased > 0 && (
            <div>
              <dt>Erased</dt>
              <dd>{count(progress.items.erased)}</dd>
            </div>
          )}
          <div>
            <dt>Verdicts</dt>
            <dd>{count(progress.verdicts.total)}</dd>
          </div>
          <div>
            <dt>Undone</dt>
            <dd>{count(progress.verdicts.undone)}</dd>
          </div>
        </dl>
      )}
      <div class="chart-pair">
        {progress && desk && (
          <section>
            <h2>Verdicts per category</h2>
            <BarChart
              unit="verdicts"
              summary={`Verdicts per category: ${desk.categories.map((c) => `${c.name} ${progress.verdicts.byCategory[c.name] ?? 0}`).join(', ')}, abstain ${progress.verdicts.abstain}.`}
              bars={[
                ...desk.categories.map((c, i) => ({
                  label: c.name,
                  value: progress.verdicts.byCategory[c.name] ?? 0,
                  className: `cat-${i % 8}`,
                })),
                { label: 'abstain', value: progress.verdicts.abstain, className: 'abstain' },
              ]}
            />
          </section>
        )}
        <section>
          <h2>Learning curve</h2>
          {measured.length === 0 && <p class="muted">The curve starts with the first published model version.</p>}
          {published.length > 0 && (
            <LineChart
              summary={`Macro-F1 on the calibration set by model version: ${published.map(f1Of).join(', ')}.`}
              xLabel="model version"
              yLabel="macro-F1 on calibration set"
              x={[published.length > 1 ? published[0].version : 0, maxVersion]}
              y={[0, 1]}
              xTicks={niceTicks(
                published.length > 1 ? published[0].version : 0,
                maxVersion,
                Math.min(6, maxVersion),
              ).filter((v) => Number.isInteger(v))}
              yTicks={[0, 0.25, 0.5, 0.75, 1]}
              yFormat={(v) => v.toFixed(2)}
              series={[
                ...(rough.length > 0
                  ? [
                      {
                        name: `too few: on fewer than ${TOO_FEW} calibration verdicts (rough)`,
                        className: 's-rough',
                        // The rough run joins the first sound version, so the line reads as one history.
                        points: measured
                          .filter((m, i) => isRough(m) || (i > 0 && isRough(measured[i - 1])))
                          .map((m): [number, number] => [m.version, m.metrics!.macroF1]),
                      },
                    ]
                  : []),
                ...(rough.length < published.length
                  ? [
                      {
                        name: `macro-F1 on ${TOO_FEW} or more calibration verdicts`,
                        className: 's-f1',
                        points: published
                          .filter((m) => !isRough(m))
                          .map((m): [number, number] => [m.version, m.metrics!.macroF1]),
                      },
                    ]
                  : []),
              ]}
            />
          )}
          {rough.length > 0 && (
            <p class="muted rough-versions">
              {rough.length === 1 ? `Version ${rough[0].version} was` : `${rough.length} versions were`} measured on
              fewer than {TOO_FEW} calibration verdicts (drawn hollow and dashed): too few to compare, a handful more
              verdicts can move them a long way.
            </p>
          )}
          {published.length > 0 && (
            <p>
              <Reading
                text={`Macro-F1 of version ${published[published.length - 1].version}: ${num(published[published.length - 1].metrics!.macroF1)}, ${macroF1Reading(published[published.length - 1].metrics!.macroF1)}${isRough(published[published.length - 1]) ? ` (on ${published[published.length - 1].metrics!.n} calibration verdicts: too few to read much into)` : ''}.`}
              />
            </p>
          )}
        </section>
      </div>
      {desk && (desk.role === 'supervisor' || desk.role === 'auditor') && <PrevalenceChart deskId={deskId} />}
      {desk && (desk.role === 'supervisor' || desk.role === 'auditor') && <KeywordCountsChart deskId={deskId} />}
      {progress?.reviewers && (
        <section>
          <h2>Reviewers</h2>
          <p class="muted">In alphabetical order; counts show the work done, not a ranking.</p>
          <TableBox label="Reviewers">
            <table class="data">
              <thead>
                <tr>
                  <th>Reviewer</th>
                  <th class="num">Verdicts</th>
                  <th>Last verdict</th>
                </tr>
              </thead>
              <tbody>
                {progress.reviewers.length === 0 && (
                  <tr>
                    <td colSpan={3}>No verdict yet.</td>
                  </tr>
                )}
                {progress.reviewers.map((r) => (
                  <tr>
                    <td>{r.name}</td>
                    <td class="num">{count(r.verdicts)}</td>
                    <td>{when(r.lastAt)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableBox>
        </section>
      )}
      <SimulatedReviewer deskId={deskId} />
      <section class="exports">
        <h2>Export</h2>
        <p>
          Downloads stream from the server; large desks take a moment. The CSV files are made for spreadsheets: text
          that a spreadsheet would run as a formula starts with an apostrophe (add <code>?raw=1</code> to the address
          for the values exactly as stored).
        </p>
        <ul class="export-links">
          <li>
            Verdicts (the decision trail):{' '}
            <a href={`/api/desks/${deskId}/trail.csv?bom=1`} download>
              CSV
            </a>{' '}
            ·{' '}
            <a href={`/api/desks/${deskId}/trail.ndjson`} download>
              NDJSON
            </a>
          </li>
          <li>
            Predictions of the current version for every open item:{' '}
            <a href={`/api/desks/${deskId}/predictions.csv?bom=1`} download>
              CSV
            </a>{' '}
            ·{' '}
            <a href={`/api/desks/${deskId}/predictions.ndjson`} download>
              NDJSON
            </a>
          </li>
        </ul>
      </section>
    </section>
  );
}

/**
 * Items reviewers marked urgent and no supervisor has acknowledged yet, at the top of the overview (looked at every
 * 5 seconds); a supervisor acknowledges each once it is in hand.
 */
function UrgentItems({ deskId, canAcknowledge }: { deskId: string; canAcknowledge: boolean }) {
  const [urgent, error, reload] = useData<UrgentList>(`/desks/${deskId}/urgent`);
  const [actionError, setActionError] = useState<string | null>(null);
  useInterval(reload, 5000);
  const acknowledge = async (itemId: number) => {
    setActionError(null);
    try {
      await post(`/items/${itemId}/acknowledge`);
    } catch (e) {
      setActionError((e as Error).message);
    }
    reload();
  };
  if (error) return <p class="error">{error}</p>;
  if (!urgent || urgent.waiting === 0) return null;
  return (
    <section class="urgent" aria-labelledby="urgent-title" role="region">
      <h2 id="urgent-title">
        Urgent: {urgent.waiting} {urgent.waiting === 1 ? 'item waits' : 'items wait'} for a supervisor
      </h2>
      <p class="muted">
        A reviewer marked these urgent with their verdict. Act under your organisation's protocol; where a life may be
        at risk, contact the emergency services. Acknowledging records that a supervisor has it in hand.
      </p>
      {actionError && (
        <p class="error" role="alert">
          {actionError}
        </p>
      )}
      <ul class="urgent-list">
        {urgent.items.map((u) => (
          <li data-item-id={u.itemId}>
            <p class="urgent-reason">
              <strong>{u.reason}</strong>{' '}
              <span class="muted">
                — {u.raisedBy}, {when(u.raisedAt)}, verdict “{u.category ?? 'abstain'}”, item {u.itemId}
                {u.externalId ? ` (ref ${u.externalId})` : ''}
              </span>
            </p>
            <blockquote class="urgent-text">{u.erased ? 'The text of this item was erased.' : u.text}</blockquote>
            {canAcknowledge && (
              <button type="button" class="primary" onClick={() => void acknowledge(u.itemId)}>
                Acknowledge item {u.itemId}
              </button>
            )}
          </li>
        ))}
      </ul>
    </section>
  );
}

/** Each category's share of each week's posts (or of each week's imports), with its 95 % interval. */
function PrevalenceChart({ deskId }: { deskId: string }) {
  const [by, setBy] = useState<'posted' | 'imported'>('posted');
  const [prev, error] = useData<Prevalence>(`/desks/${deskId}/prevalence?period=week&by=${by}`, [by]);
  const periods = prev?.periods ?? [];
  const withFigures = periods.filter((p) => prev!.categories.some((c) => p.perCategory[c].share !== null));
  const last = Math.max(1, periods.length - 1);
  const pct = (v: number) => `${Math.round(v * 100)} %`;
  return (
    <section class="prevalence">
      <h2>Share of each category over time</h2>
      <p>
        <label>
          Weeks of{' '}
          <select value={by} onChange={(e) => setBy(e.currentTarget.value as 'posted' | 'imported')}>
            <option value="posted">posting</option>
            <option value="imported">import</option>
          </select>
        </label>{' '}
        ·{' '}
        <a href={`/api/desks/${deskId}/prevalence.csv?period=week&by=${by}&bom=1`} download>
          CSV
        </a>
      </p>
      {error && <p class="error">{error}</p>}
      {prev && withFigures.length === 0 && (
        <p class="muted">
          The shares appear once weeks have verdicts on random draws
          {prev.undated > 0 ? ` (${count(prev.undated)} items have no posting time and are left out)` : ''}.
        </p>
      )}
      {prev && withFigures.length > 0 && (
        <>
          <LineChart
            summary={`Share of each category per week: ${periods
              .map(
                (p) =>
                  `${p.start}: ${prev.categories.map((c) => `${c} ${p.perCategory[c].share === null ? 'no estimate' : pct(p.perCategory[c].share)}`).join(', ')}`,
              )
              .join('; ')}.`}
            xLabel={`week of ${by === 'posted' ? 'posting' : 'import'} (starting Monday)`}
            yLabel="share of the week's items (%)"
            x={[0, last]}
            y={[0, 1]}
            xTicks={niceTicks(0, last, Math.min(6, last)).filter((v) => Number.isInteger(v))}
            xFormat={(v) => periods[v]?.start.slice(5) ?? ''}
            yTicks={[0, 0.25, 0.5, 0.75, 1]}
            yFormat={pct}
            series={prev.categories.map((c, i) => {
              const known = periods.map((p, x) => ({ x, f: p.perCategory[c] })).filter(({ f }) => f.share !== null);
              return {
                name: `${c} (band: 95 % interval)`,
                className: `prev-${i % 5}`,
                points: known.map(({ x, f }): [number, number] => [x, f.share!]),
                band: known.map(({ x, f }): [number, number, number] => [x, f.lower, f.upper]),
              };
            })}
          />
          <p class="muted">
            {prev.method} {prev.approximation} Random verdicts per week:{' '}
            {periods.map((p) => `${p.start} ${p.randomVerdicts}`).join(', ')}.
            {prev.undated > 0 ? ` ${count(prev.undated)} items without a posting time are left out.` : ''}
          </p>
        </>
      )}
    </section>
  );
}

/** Items matching each category's seed terms per week, and how far that count is off on the random draws. */
function KeywordCountsChart({ deskId }: { deskId: string }) {
  const [kc, error] = useData<KeywordCounts>(`/desks/${deskId}/keyword-counts?period=week&by=posted`);
  const periods = kc?.periods ?? [];
  const last = Math.max(1, periods.length - 1);
  const top = Math.max(1, ...periods.flatMap((p) => Object.values(p.perCategory).map((f) => f.matches)));
  const share = (s: { estimate: number | null; lower: number; upper: number; n: number }) =>
    s.estimate === null
      ? 'no random draw yet'
      : `${Math.round(s.estimate * 100)} % (${Math.round(s.lower * 100)}–${Math.round(s.upper * 100)} %, ${count(s.n)} draws)`;
  return (
    <section class="keyword-counts">
      <h2>Keyword counts over time</h2>
      {error && <p class="error">{error}</p>}
      {kc && kc.categories.length === 0 && (
        <p class="muted">Keyword counts appear once the desk has seed terms and its texts have been counted.</p>
      )}
      {kc && kc.categories.length > 0 && (
        <>
          {periods.length > 0 && (
            <LineChart
              summary={`Items matching the seed terms per week: ${periods
                .map((p) => `${p.start}: ${kc.categories.map((c) => `${c} ${p.perCategory[c].matches}`).join(', ')}`)
                .join('; ')}.`}
              xLabel="week of posting (starting Monday)"
              yLabel="items matching the seed terms"
              x={[0, last]}
              y={[0, top]}
              xTicks={niceTicks(0, last, Math.min(6, last)).filter((v) => Number.isInteger(v))}
              xFormat={(v) => periods[v]?.start.slice(5) ?? ''}
              yTicks={niceTicks(0, top, 4)}
              yFormat={(v) => count(v)}
              series={kc.categories.map((c, i) => ({
                name: c,
                className: `prev-${i % 5}`,
                points: periods.map((p, x): [number, number] => [x, p.perCategory[c].matches]),
              }))}
            />
          )}
          <TableBox label="Keyword counts against the random draws">
            <table>
              <caption>How far the keyword count is off, on the random draws of every week</caption>
              <thead>
                <tr>
                  <th scope="col">category</th>
                  <th scope="col">items matching</th>
                  <th scope="col">precision: matches that are the category</th>
                  <th scope="col">recall: the category's items that match</th>
                </tr>
              </thead>
              <tbody>
                {kc.categories.map((c) => (
                  <tr key={c}>
                    <th scope="row">{c}</th>
                    <td>{count(kc.total.perCategory[c].matches)}</td>
                    <td>
                      {share(kc.total.perCategory[c].precision)}{' '}
                      <TooFew n={kc.total.perCategory[c].precision.n} of="random draws that match" />{' '}
                      <Reading text={keywordPrecisionReading(kc.total.perCategory[c].precision.estimate)} />
                    </td>
                    <td>
                      {share(kc.total.perCategory[c].recall)}{' '}
                      <TooFew n={kc.total.perCategory[c].recall.n} of="random draws of the category" />{' '}
                      <Reading text={keywordRecallReading(kc.total.perCategory[c].recall.estimate)} />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableBox>
          <p class="muted">
            Precision below 100 % means the keyword list over-counts (a word with several senses); recall below 100 %
            means it under-counts (the category said in other words). Intervals are 95 %.
            {kc.stale ? ' The seed terms changed after the last count; the counts follow within a minute or so.' : ''}
            {kc.undated > 0 ? ` ${count(kc.undated)} items without a posting time are left out.` : ''}
          </p>
        </>
      )}
    </section>
  );
}

function SimulatedReviewer({ deskId }: { deskId: string }) {
  const [sim, error, reload] = useData<SimulationStatus>(`/desks/${deskId}/simulation`);
  const [actionError, setActionError] = useState<string | null>(null);
  useInterval(reload, sim?.state === 'running' ? 2000 : null);
  const act = async (fn: () => Promise<unknown>) => {
    setActionError(null);
    try {
      await fn();
      reload();
    } catch (e) {
      setActionError((e as Error).message);
    }
  };
  return (
    <section class="simulation">
      <h2>Simulated reviewer</h2>
      {error && <p class="error">{error}</p>}
      {sim && !sim.available && <p class="muted">{sim.reason ?? 'Not available on this desk.'}</p>}
      {sim?.available && (
        <>
          <p>
            A simulated reviewer works the queue like a person, answering from the generated posts' hidden labels, so
            you can watch model versions appear and sets tighten. Its verdicts are marked as simulated in the decision
            trail.
          </p>
          {sim.state === 'running' ? (
            <p role="status">
              Working until {when(sim.until)}: {count(sim.verdicts)} verdicts so far.{' '}
              <button type="button" onClick={() => void act(() => api('DELETE', `/desks/${deskId}/simulation`))}>
                Stop it
              </button>
            </p>
          ) : (
            <p>
              {sim.state !== 'idle' && (
                <span class="muted">
                  Last run: {count(sim.verdicts)} verdicts ({sim.state}).{' '}
                </span>
              )}
              <button
                type="button"
                class="primary"
                onClick={() => void act(() => post(`/desks/${deskId}/simulation`, { minutes: 2 }))}
              >
                Let a simulated reviewer work for 2 minutes
              </button>
            </p>
          )}
        </>
      )}
      {actionError && (
        <p class="error" role="alert">
          {actionError}
        </p>
      )}
    </section>
  );
}
