import type { Desk, ItemRecord } from '../api';
import { useData, type PageProps } from '../app';
import { isoWhen, pct } from '../format';
import { TableBox } from '../components/table-box';
import { ItemTextOnDemand } from '../components/item-text';
import { CALL_READINGS, DRAW_WORDS } from '../readings';

/**
 * One item for oversight: what it is, its text on request (recorded as a read), every verdict with its draw, each
 * model version's call on it and the settlements. An erased item says when; its verdicts stay.
 */
export function ItemPage({ params }: PageProps) {
  const { deskId, itemId } = params as { deskId: string; itemId: string };
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const [item, error] = useData<ItemRecord>(`/items/${itemId}`);
  const categories = desk?.categories.map((c) => c.name) ?? [];
  return (
    <section class="page item-page">
      <p>
        <a href={`/desks/${deskId}/trail`}>← Decision trail</a>
      </p>
      <h1>Item {itemId}</h1>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {item && (
        <>
          {item.erasedAt && (
            <p class="notice erased-notice" role="status">
              Erased on {isoWhen(item.erasedAt)}
              {item.erasedBy === 'retention' ? ' by the desk’s retention period' : ' at a supervisor’s request'}: the
              text, metadata, external id and source are gone; the verdicts stay.
            </p>
          )}
          <dl class="item-facts">
            <div>
              <dt>External id</dt>
              <dd>{item.externalId ?? '–'}</dd>
            </div>
            <div>
              <dt>Source</dt>
              <dd>{item.source ?? '–'}</dd>
            </div>
            <div>
              <dt>Posted (UTC)</dt>
              <dd>{isoWhen(item.postedAt)}</dd>
            </div>
            <div>
              <dt>Imported (UTC)</dt>
              <dd>{isoWhen(item.importedAt)}</dd>
            </div>
            <div>
              <dt>State</dt>
              <dd>{item.state}</dd>
            </div>
          </dl>
          <section>
            <h2>Text</h2>
            <ItemTextOnDemand itemId={item.id} categories={categories} erasedAt={item.erasedAt} />
          </section>
          <section>
            <h2>Verdicts</h2>
            {item.verdicts.length === 0 && <p class="empty">No verdict on this item yet.</p>}
            {item.verdicts.length > 0 && (
              <TableBox label="Verdicts on this item">
                <table class="data item-verdicts">
                  <thead>
                    <tr>
                      <th>Time (UTC)</th>
                      <th>Reviewer</th>
                      <th>Verdict</th>
                      <th>Draw</th>
                      <th>Model showed</th>
                      <th>Note</th>
                    </tr>
                  </thead>
                  <tbody>
                    {item.verdicts.map((v) => (
                      <tr class={v.undoneAt ? 'undone' : ''} key={v.id}>
                        <td class="time">{isoWhen(v.createdAt)}</td>
                        <td>
                          {v.reviewer}
                          {v.simulated && <span class="tag">simulated</span>}
                        </td>
                        <td>
                          {v.abstain ? 'abstain' : v.category}
                          {v.undoneAt && <span class="tag">undone {isoWhen(v.undoneAt)}</span>}
                        </td>
                        <td>
                          {v.draw} <span class="reading">({DRAW_WORDS[v.draw] ?? v.draw})</span>
                        </td>
                        <td>
                          {v.modelVersion
                            ? `v${v.modelVersion}: ${v.shownCall} {${(v.shownSet ?? []).join(', ')}}`
                            : 'no model'}
                        </td>
                        <td>{v.note ?? ''}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </TableBox>
            )}
          </section>
          <section>
            <h2>Each version's call</h2>
            <p class="muted">
              Sets are read at the desk's coverage target and mode now. A verdict's own row above keeps what was shown
              when it was given.
            </p>
            {item.calls.length === 0 && <p class="empty">No model version has a call on this item.</p>}
            {item.calls.length > 0 && (
              <TableBox label="Each version's call on this item">
                <table class="data item-calls">
                  <thead>
                    <tr>
                      <th>Version</th>
                      <th>Call</th>
                      <th>Prediction set</th>
                      {categories.map((c) => (
                        <th class="num">{c}</th>
                      ))}
                    </tr>
                  </thead>
                  <tbody>
                    {item.calls.map((c) => (
                      <tr key={c.modelVersion}>
                        <td>
                          <a href={`/desks/${deskId}/models/${c.modelVersion}`}>v{c.modelVersion}</a>
                          {c.current && <span class="tag">current</span>}
                          {c.computed && <span class="tag">computed now</span>}
                        </td>
                        <td>
                          {c.call} <span class="reading">({CALL_READINGS[c.call]})</span>
                        </td>
                        <td>{`{${c.set.join(', ')}}`}</td>
                        {categories.map((name) => (
                          <td class="num">{pct(c.probabilities[name], 1)}</td>
                        ))}
                      </tr>
                    ))}
                  </tbody>
                </table>
              </TableBox>
            )}
          </section>
          <section>
            <h2>Settlements</h2>
            {item.settlements.length === 0 && <p class="empty">Not settled.</p>}
            {item.settlements.length > 0 && (
              <ol class="item-settlements">
                {item.settlements.map((s, i) => (
                  <li key={s.id}>
                    {isoWhen(s.createdAt)}: <strong>{s.category}</strong> by {s.settledBy}: “{s.reason}”
                    {i === item.settlements.length - 1 && <span class="tag">counts</span>}
                  </li>
                ))}
              </ol>
            )}
          </section>
        </>
      )}
    </section>
  );
}
