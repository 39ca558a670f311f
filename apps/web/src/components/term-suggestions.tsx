import { useState } from 'preact/hooks';
import { ApiError, post, type Desk, type TermDecision, type TermSuggestion, type TermSuggestions } from '../api';
import { useData } from '../app';

const LIMIT = 15;

function Passage({ snippet }: { snippet: TermSuggestion['snippets'][number] }) {
  return (
    <q class="passage">
      {snippet.start > 0 ? '…' : ''}
      {snippet.text.slice(0, snippet.start)}
      <mark>{snippet.text.slice(snippet.start, snippet.end)}</mark>
      {snippet.text.slice(snippet.end)}…
    </q>
  );
}

function leaningText(s: TermSuggestion, category: string): string {
  if (s.towardsCategory === null) return 'no model yet';
  return s.towardsCategory ? `towards ${category}` : `away from ${category}`;
}

function SuggestionTable({
  caption,
  rows,
  category,
  busy,
  onDecide,
}: {
  caption: string;
  rows: TermSuggestion[];
  category: string;
  busy: boolean;
  onDecide: (term: string, decision: 'accept' | 'dismiss') => void;
}) {
  if (rows.length === 0) return null;
  return (
    <div class="table-box" tabIndex={0}>
      <table class="data term-suggestions">
        <caption>{caption}</caption>
        <thead>
          <tr>
            <th scope="col">Term</th>
            <th scope="col" class="num">
              Items
            </th>
            <th scope="col">Current model</th>
            <th scope="col">Where it occurs</th>
            <th scope="col">Decide</th>
          </tr>
        </thead>
        <tbody>
          {rows.map((s) => (
            <tr key={s.term} data-term={s.term}>
              <th scope="row">{s.term}</th>
              <td class="num">{s.count}</td>
              <td>{leaningText(s, category)}</td>
              <td>
                {s.snippets.map((sn) => (
                  <div key={sn.itemId}>
                    <Passage snippet={sn} />
                  </div>
                ))}
              </td>
              <td>
                <button
                  type="button"
                  disabled={busy}
                  aria-label={`Add “${s.term}” to the seed terms of ${category}`}
                  onClick={() => onDecide(s.term, 'accept')}
                >
                  Add
                </button>{' '}
                <button
                  type="button"
                  class="quiet"
                  disabled={busy}
                  aria-label={`Not this one: do not suggest “${s.term}” for ${category} again`}
                  onClick={() => onDecide(s.term, 'dismiss')}
                >
                  Not this one
                </button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/**
 * Seed-term suggestions of one desk: words used like a category's seed terms
 * in the desk's own texts, and words the current model leans towards it.
 * Adding one changes the desk's seed terms (kept in the audit trail);
 * "Not this one" is remembered for the category.
 */
export function TermSuggestionsPanel({ desk, onSeedTermsChanged }: { desk: Desk; onSeedTermsChanged: () => void }) {
  const [category, setCategory] = useState(desk.categories[0]?.name ?? '');
  const path = `/desks/${desk.id}/term-suggestions?category=${encodeURIComponent(category)}&limit=${LIMIT}`;
  const [data, error, reload] = useData<TermSuggestions>(category ? path : null);
  const [busy, setBusy] = useState(false);
  const [status, setStatus] = useState<string | null>(null);
  const [failure, setFailure] = useState<string | null>(null);

  const decide = async (term: string, decision: 'accept' | 'dismiss') => {
    setBusy(true);
    setFailure(null);
    try {
      const r = await post<TermDecision>(`/desks/${desk.id}/term-suggestions/${decision}`, { category, term });
      setStatus(
        r.decision === 'accepted'
          ? `“${r.term}” is now a seed term of ${r.category}.`
          : `“${r.term}” will not be suggested for ${r.category} again.`,
      );
      if (r.decision === 'accepted') onSeedTermsChanged();
      reload();
    } catch (e) {
      setFailure(e instanceof ApiError ? e.message : String(e));
    } finally {
      setBusy(false);
    }
  };

  return (
    <section class="term-suggestions-panel" aria-labelledby="term-suggestions-title">
      <h2 id="term-suggestions-title">Seed-term suggestions</h2>
      <p class="lead">
        Words that occur in the same company as a category’s seed terms in this desk’s texts, and words the current
        model leans towards the category. They describe how words are used here, not what they mean: read the passages
        before adding one. Seed terms pick the first items and are marked in the text; they do not decide anything.
      </p>
      <label>
        Category{' '}
        <select value={category} onChange={(e) => setCategory((e.target as HTMLSelectElement).value)}>
          {desk.categories.map((c) => (
            <option key={c.id} value={c.name}>
              {c.name}
            </option>
          ))}
        </select>
      </label>
      {(error ?? failure) && (
        <p class="error" role="alert">
          {error ?? failure}
        </p>
      )}
      {status && (
        <p class="notice" role="status">
          {status}
        </p>
      )}
      {data && data.computedAt === null && (
        <p class="muted">The desk’s texts have not been counted yet; that happens shortly after each import.</p>
      )}
      {data && data.computedAt !== null && (
        <>
          <p class="muted">
            Counted over {data.itemsCounted} items ({data.vocabularySize} words) at{' '}
            {new Date(data.computedAt).toLocaleString('en-GB')}.
            {data.seedTermsNotCounted.length > 0 && ` Not in that count yet: ${data.seedTermsNotCounted.join(', ')}.`}
          </p>
          {data.similar.length === 0 && data.fromModel.length === 0 && (
            <p class="muted">No suggestions: give the category a seed term that occurs in the texts.</p>
          )}
          <SuggestionTable
            caption={`Used like the seed terms of ${data.category}`}
            rows={data.similar}
            category={data.category}
            busy={busy}
            onDecide={(t, d) => void decide(t, d)}
          />
          <SuggestionTable
            caption={`Leaned towards ${data.category} by model version ${data.modelVersion ?? ''}`}
            rows={data.fromModel}
            category={data.category}
            busy={busy}
            onDecide={(t, d) => void decide(t, d)}
          />
        </>
      )}
    </section>
  );
}
