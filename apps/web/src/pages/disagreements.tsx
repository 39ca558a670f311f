import { useState } from 'preact/hooks';
import { get, post, type Agreement, type Desk, type Disagreement, type DisagreementList } from '../api';
import { useData, type PageProps } from '../app';
import { num, when } from '../format';
import { TableBox } from '../components/table-box';
import { TooFew } from '../components/too-few';
import { Reading } from '../components/reading';
import { alphaReading, kappaReading } from '../readings';

function why(r: Disagreement['reasons'][number]): string {
  return r.kind === 'reviewers-differ'
    ? `Reviewers gave different categories: ${r.categories.join(', ')}.`
    : `A verdict of “${r.category}” went against a sure call of “${r.shownSet.join(', ')}” by model version ${r.modelVersion}, whose coverage checks are healthy.`;
}

/** Agreement between reviewers, and the items they disagree on; supervisors settle them, auditors read. */
export function DisagreementsPage({ role, params }: PageProps) {
  const deskId = params.deskId;
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const [agreement, agreementError] = useData<Agreement>(`/desks/${deskId}/agreement`);
  const [page, error, reload] = useData<DisagreementList>(`/desks/${deskId}/disagreements?limit=50`);
  const [more, setMore] = useState<Disagreement[]>([]);
  const rows = [...(page?.disagreements ?? []), ...more];
  const canSettle = role === 'supervisor';

  return (
    <section class="page">
      <h1>Agreement and disagreements</h1>
      {(error || agreementError) && (
        <p class="error" role="alert">
          {error ?? agreementError}
        </p>
      )}
      {agreement && (
        <section class="agreement">
          <h2>Agreement between reviewers</h2>
          {agreement.items === 0 && (
            <p class="muted">
              No item has two verdicts yet. A share of decided items goes to a second reviewer (the desk's
              second-opinion share); agreement figures appear once those come back.
            </p>
          )}
          {agreement.items > 0 && (
            <>
              <dl class="figures">
                <div>
                  <dt>Krippendorff's alpha (nominal)</dt>
                  <dd>
                    {num(agreement.krippendorff.alpha, 3)} <Reading text={alphaReading(agreement.krippendorff.alpha)} />
                  </dd>
                </div>
                <div>
                  <dt>95 % bootstrap interval</dt>
                  <dd>
                    {num(agreement.krippendorff.interval.lower, 2)} to {num(agreement.krippendorff.interval.upper, 2)}
                  </dd>
                </div>
                <div>
                  <dt>Fleiss' kappa</dt>
                  <dd>
                    {num(agreement.fleiss.kappa, 3)} <Reading text={kappaReading(agreement.fleiss.kappa)} />{' '}
                    <TooFew n={agreement.items} of="items with two or more verdicts" />
                  </dd>
                </div>
                <div>
                  <dt>Items with two or more verdicts</dt>
                  <dd>{agreement.items}</dd>
                </div>
              </dl>
              <p class="muted">Abstentions count as missing values. {agreement.fleiss.unequalVerdicts}</p>
              <div class="chart-pair">
                <TableBox label="Agreement per category">
                  <table class="data">
                    <caption>Per category (Fleiss' kappa)</caption>
                    <thead>
                      <tr>
                        <th>Category</th>
                        <th class="num">Verdicts</th>
                        <th class="num">Kappa</th>
                        <th>Reading</th>
                      </tr>
                    </thead>
                    <tbody>
                      {agreement.perCategory.map((c) => (
                        <tr>
                          <td>{c.category}</td>
                          <td class="num">{c.verdicts}</td>
                          <td class="num">{num(c.fleissKappa, 3)}</td>
                          <td>
                            {kappaReading(c.fleissKappa)} <TooFew n={c.verdicts} of="verdicts" />
                          </td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                </TableBox>
                <TableBox label="Agreement per pair of reviewers">
                  <table class="data">
                    <caption>Per pair of reviewers (Cohen's kappa)</caption>
                    <thead>
                      <tr>
                        <th>Reviewers</th>
                        <th class="num">Shared items</th>
                        <th class="num">Kappa</th>
                        <th>Reading</th>
                      </tr>
                    </thead>
                    <tbody>
                      {agreement.cohen.map((c) => (
                        <tr>
                          <td>{c.reviewers.join(' and ')}</td>
                          <td class="num">{c.items}</td>
                          <td class="num">{num(c.kappa, 3)}</td>
                          <td>
                            {kappaReading(c.kappa)} <TooFew n={c.items} of="shared items" />
                          </td>
                        </tr>
                      ))}
                    </tbody>
                  </table>
                </TableBox>
              </div>
            </>
          )}
        </section>
      )}
      <h2>Items to settle</h2>
      <p class="lead">
        {canSettle
          ? 'Settle an item with the category it belongs to and your reason. The settled label trains and calibrates from then on; every verdict stays in the trail.'
          : 'Read-only: supervisors settle these items.'}
      </p>
      {page && rows.length === 0 && <p class="empty">No disagreement on this desk.</p>}
      <ol class="disagreements">
        {rows.map((d) => (
          <DisagreementCard
            d={d}
            categories={desk?.categories.map((c) => c.name) ?? []}
            canSettle={canSettle}
            onSettled={() => {
              setMore([]);
              reload();
            }}
          />
        ))}
      </ol>
      {page?.next && rows.length >= 50 && more.length === 0 && (
        <button
          type="button"
          onClick={() =>
            void get<DisagreementList>(`/desks/${deskId}/disagreements?limit=200&after=${page.next}`).then((p) =>
              setMore(p.disagreements),
            )
          }
        >
          More
        </button>
      )}
    </section>
  );
}

function DisagreementCard({
  d,
  categories,
  canSettle,
  onSettled,
}: {
  d: Disagreement;
  categories: string[];
  canSettle: boolean;
  onSettled: () => void;
}) {
  const [category, setCategory] = useState(d.settled?.category ?? '');
  const [reason, setReason] = useState('');
  const [error, setError] = useState<string | null>(null);
  const settle = async (e: Event) => {
    e.preventDefault();
    setError(null);
    try {
      await post(`/items/${d.item.id}/settle`, { category, reason });
      setReason('');
      onSettled();
    } catch (err) {
      setError((err as Error).message);
    }
  };
  return (
    <li class="disagreement" data-item-id={d.item.id}>
      <p class="item-meta">
        Item {d.item.id}
        {d.item.externalId ? ` · ref ${d.item.externalId}` : ''}
      </p>
      {d.item.text === null ? (
        <p class="item-text small erased">Text erased on {when(d.item.erasedAt)}</p>
      ) : (
        <p class="item-text small">{d.item.text}</p>
      )}
      <ul>
        {d.reasons.map((r) => (
          <li>{why(r)}</li>
        ))}
      </ul>
      <TableBox label="Verdicts on this item">
        <table class="data">
          <thead>
            <tr>
              <th>Reviewer</th>
              <th>Verdict</th>
              <th>When</th>
              <th>Model showed</th>
            </tr>
          </thead>
          <tbody>
            {d.verdicts.map((v) => (
              <tr class={v.undoneAt ? 'undone' : ''}>
                <td>{v.reviewer}</td>
                <td>{v.abstain ? 'abstain' : v.category}</td>
                <td>{when(v.createdAt)}</td>
                <td>{v.modelVersion ? `v${v.modelVersion}: ${v.shownCall}` : 'no model'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </TableBox>
      {d.settled && (
        <p class="notice">
          Settled as <strong>{d.settled.category}</strong> by {d.settled.settledBy}, {when(d.settled.settledAt)}: “
          {d.settled.reason}”
        </p>
      )}
      {canSettle && (
        <form class="settle" onSubmit={(e) => void settle(e)}>
          <label>
            Category
            <select required value={category} onChange={(e) => setCategory(e.currentTarget.value)}>
              <option value="" disabled>
                choose
              </option>
              {categories.map((c) => (
                <option value={c}>{c}</option>
              ))}
            </select>
          </label>
          <label class="grow">
            Reason
            <input required maxLength={2000} value={reason} onInput={(e) => setReason(e.currentTarget.value)} />
          </label>
          <button type="submit" class="primary">
            {d.settled ? 'Settle again' : 'Settle'}
          </button>
          {error && (
            <p class="error" role="alert">
              {error}
            </p>
          )}
        </form>
      )}
    </li>
  );
}
