import { useState } from 'preact/hooks';
import { get, type Desk, type Verdict, type VerdictList } from '../api';
import { useData, type PageProps } from '../app';
import { navigate } from '../router';
import { when } from '../format';
import { TableBox } from '../components/table-box';

const PAGE = 100;

/** The decision trail: every verdict, newest first, filterable by reviewer, category and date. Read-only. */
export function TrailPage({ params, query }: PageProps) {
  const deskId = params.deskId;
  const [desk] = useData<Desk>(`/desks/${deskId}`);
  const filters = {
    reviewer: query.get('reviewer') ?? '',
    category: query.get('category') ?? '',
    from: query.get('from') ?? '',
    to: query.get('to') ?? '',
  };
  // The screen's "to" is a day, inclusive; the API's `to` is an instant, exclusive: the next day's start.
  const qs = new URLSearchParams(
    Object.entries({ ...filters, to: filters.to ? nextDay(filters.to) : '' }).filter(([, v]) => v),
  );
  const [first, error] = useData<VerdictList>(
    `/desks/${deskId}/verdicts?limit=${PAGE}${qs.toString() ? `&${qs}` : ''}`,
  );
  const [more, setMore] = useState<Verdict[]>([]);
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
      const page = await get<VerdictList>(
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
          Reviewer
          <input value={form.reviewer} onInput={(e) => setForm({ ...form, reviewer: e.currentTarget.value })} />
        </label>
        <label>
          Category
          <select value={form.category} onChange={(e) => setForm({ ...form, category: e.currentTarget.value })}>
            <option value="">any</option>
            {desk?.categories.map((c) => (
              <option value={c.name}>{c.name}</option>
            ))}
            <option value="abstain">abstain</option>
          </select>
        </label>
        <label>
          From
          <input type="date" value={form.from} onInput={(e) => setForm({ ...form, from: e.currentTarget.value })} />
        </label>
        <label>
          To (inclusive)
          <input type="date" value={form.to} onInput={(e) => setForm({ ...form, to: e.currentTarget.value })} />
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
            <thead>
              <tr>
                <th>Time</th>
                <th>Reviewer</th>
                <th>Item</th>
                <th>Verdict</th>
                <th>Model showed</th>
                <th class="num">Time taken</th>
                <th>Note</th>
              </tr>
            </thead>
            <tbody>
              {rows.map((v) => (
                <tr class={v.undoneAt ? 'undone' : ''}>
                  <td>{when(v.createdAt)}</td>
                  <td>
                    {v.reviewer}
                    {v.simulated && <span class="tag">simulated</span>}
                  </td>
                  <td class="num">{v.itemId}</td>
                  <td>
                    {v.abstain ? 'abstain' : v.category}
                    {v.undoneAt && <span class="tag">undone {when(v.undoneAt)}</span>}
                  </td>
                  <td>
                    {v.modelVersion
                      ? `v${v.modelVersion}: ${v.shownCall} {${(v.shownSet ?? []).join(', ')}}`
                      : 'no model'}
                  </td>
                  <td class="num">{v.elapsedMs === null ? '–' : `${Math.round(v.elapsedMs / 1000)} s`}</td>
                  <td>{v.note ?? ''}</td>
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
