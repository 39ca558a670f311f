import { useState } from 'preact/hooks';
import { get, type Desk, type DeskVerdict, type DeskVerdictList, type Progress } from '../api';
import { useData, type PageProps } from '../app';
import { navigate } from '../router';
import { isoWhen } from '../format';
import { TableBox } from '../components/table-box';
import { ItemTextOnDemand } from '../components/item-text';
import { DRAW_WORDS } from '../readings';

const PAGE = 100;

/** A day as the filters take it: ISO 8601, `YYYY-MM-DD`. */
const DAY = '\\d{4}-\\d{2}-\\d{2}';

/**
 * The decision trail: every verdict, newest first, filterable by part of a reviewer's name, category and date (ISO
 * 8601 days, UTC, like the times in the table). Each item id opens the item's page; its text shows on request (the
 * button, or `t` on a row), and each reading is recorded in the audit trail. Read-only.
 */
export function TrailPage({ params, query }: PageProps) {
  const deskId = params.deskId;
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const filters = {
    reviewer: query.get('reviewer') ?? '',
    category: query.get('category') ?? '',
    from: query.get('from') ?? '',
    to: query.get('to') ?? '',
  };
  // The screen's "to" is a day, inclusive; the API's `to` is an instant, exclusive: the next day's start. The
  // reviewer box takes part of a name (the API's reviewerMatch).
  const { reviewer, ...rest } = filters;
  const qs = new URLSearchParams(
    Object.entries({ ...rest, reviewerMatch: reviewer, to: filters.to ? nextDay(filters.to) : '' }).filter(
      ([, v]) => v,
    ),
  );
  const [progress] = useData<Progress>(`/desks/${deskId}/progress`);
  const reviewers = (progress?.reviewers ?? []).map((r) => r.name).sort((a, b) => a.localeCompare(b));
  const categories = desk?.categories.map((c) => c.name) ?? [];
  const [first, error] = useData<DeskVerdictList>(
    `/desks/${deskId}/verdicts?limit=${PAGE}${qs.toString() ? `&${qs}` : ''}`,
  );
  const [more, setMore] = useState<DeskVerdict[]>([]);
  const [moreError, setMoreError] = useState<string | null>(null);
  const [form, setForm] = useState(filters);
  const rows = [...(first?.verdicts ?? []), ...more];

  const apply = (e: Event) => {
    e.preventDefault();
    setMore([]);
    const next = new URLSearchParams(Object.entries(form).filter(([, v]) => v));
    navigate(`/desks/${deskId}/trail${next.toString() ? `?${next}` : ''}`);
  };
  const older = async () => {
    const last = rows.at(-1);
    if (!last) return;
    try {
      const page = await get<DeskVerdictList>(
        `/desks/${deskId}/verdicts?limit=${PAGE}&before=${last.id}${qs.toString() ? `&${qs}` : ''}`,
      );
      setMore([...more, ...page.verdicts]);
    } catch (e) {
      setMoreError((e as Error).message);
    }
  };

  return (
    <section class="page">
      <h1>Decision trail</h1>
      <p class="lead">
        Every verdict with who gave it, when, and what the model showed at that moment. Undone verdicts stay in the
        trail, marked.
      </p>
      <form class="filters" onSubmit={apply} role="search">
        <label>
          Reviewer (part of the name)
          <input
            list="trail-reviewers"
            autocomplete="off"
            value={form.reviewer}
            onInput={(e) => setForm({ ...form, reviewer: e.currentTarget.value })}
          />
          <datalist id="trail-reviewers">
            {reviewers.map((n) => (
              <option value={n} />
            ))}
          </datalist>
        </label>
        <label>
          Category
          <select value={form.category} onChange={(e) => setForm({ ...form, category: e.currentTarget.value })}>
            <option value="">any</option>
            {categories.map((c) => (
              <option value={c}>{c}</option>
            ))}
            <option value="abstain">abstain</option>
          </select>
        </label>
        <label>
          From (YYYY-MM-DD, UTC)
          <input
            class="day"
            inputMode="numeric"
            pattern={DAY}
            placeholder="YYYY-MM-DD"
            value={form.from}
            onInput={(e) => setForm({ ...form, from: e.currentTarget.value })}
          />
        </label>
        <label>
          To, inclusive (YYYY-MM-DD, UTC)
          <input
            class="day"
            inputMode="numeric"
            pattern={DAY}
            placeholder="YYYY-MM-DD"
            value={form.to}
            onInput={(e) => setForm({ ...form, to: e.currentTarget.value })}
          />
        </label>
        <button type="submit">Filter</button>
      </form>
      {(error || moreError) && (
        <p class="error" role="alert">
          {error ?? moreError}
        </p>
      )}
      {first && rows.length === 0 && <p class="empty">No verdict matches these filters.</p>}
      {rows.length > 0 && (
        <TableBox label="Decision trail">
          <table class="data trail">
            <caption>
              Times in ISO 8601, UTC. Focus a row and press <kbd>t</kbd> to show its text.
            </caption>
            <thead>
              <tr>
                <th>Time (UTC)</th>
                <th>Reviewer</th>
                <th>Item</th>
                <th>Verdict</th>
                <th>Draw</th>
                <th>Model showed</th>
                <th class="num">Time taken</th>
                <th>Note</th>
                <th>Text</th>
              </tr>
            </thead>
            <tbody onKeyDown={readOnKey}>
              {rows.map((v) => (
                <tr class={v.undoneAt ? 'undone' : ''} key={v.id}>
                  <td class="time">{isoWhen(v.createdAt)}</td>
                  <td>
                    {v.reviewer}
                    {v.simulated && <span class="tag">simulated</span>}
                  </td>
                  <td class="num">
                    <a href={`/desks/${deskId}/items/${v.itemId}`}>{v.itemId}</a>
                  </td>
                  <td>
                    {v.abstain ? 'abstain' : v.category}
                    {v.undoneAt && <span class="tag">undone {isoWhen(v.undoneAt)}</span>}
                  </td>
                  <td title={DRAW_WORDS[v.draw]}>{v.draw}</td>
                  <td>
                    {v.modelVersion
                      ? `v${v.modelVersion}: ${v.shownCall} {${(v.shownSet ?? []).join(', ')}}`
                      : 'no model'}
                  </td>
                  <td class="num">{v.elapsedMs === null ? '–' : `${Math.round(v.elapsedMs / 1000)} s`}</td>
                  <td>{v.note ?? ''}</td>
                  <td class="text-cell">
                    <ItemTextOnDemand itemId={v.itemId} categories={categories} erasedAt={v.itemErasedAt} />
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
      {rows.length > 0 && rows.length % PAGE === 0 && (
        <button type="button" onClick={() => void older()}>
          Older verdicts
        </button>
      )}
    </section>
  );
}

/** `YYYY-MM-DD` of the day after; the input unchanged when it is not such a date (the server then says what is wrong). */
function nextDay(day: string): string {
  const d = new Date(`${day}T00:00:00Z`);
  return Number.isNaN(d.getTime()) ? day : new Date(d.getTime() + 86_400_000).toISOString().slice(0, 10);
}

/** `t` on a row (its link or button focused) shows that row's text, as its button would. */
function readOnKey(e: KeyboardEvent): void {
  if (e.key !== 't' || e.ctrlKey || e.metaKey || e.altKey) return;
  const target = e.target instanceof HTMLElement ? e.target : null;
  if (!target || target.closest('input, textarea, select')) return;
  const button = target.closest('tr')?.querySelector<HTMLButtonElement>('button.show-text');
  if (!button) return;
  e.preventDefault();
  button.click();
}
