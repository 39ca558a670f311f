import { useState } from 'preact/hooks';
import { ApiError, patch, post, type Desk, type RetentionRun } from '../api';

/** A period field's text as days, or null (keep) when empty. */
function days(text: string): number | null {
  const t = text.trim();
  return t === '' ? null : Number(t);
}
const show = (d: number | null | undefined) => (d === null || d === undefined ? '' : String(d));

/**
 * The desk's retention periods: how long texts are kept, per category for decided items, and a dry run that says how
 * many items the periods would erase now, by category. The daily run erases them.
 */
export function RetentionPanel({
  desk,
  saved,
  onSaved,
}: {
  desk: Desk;
  /** The notice of the last save, kept by the page: the panel is drawn afresh once the saved desk comes back. */
  saved: string | null;
  onSaved: (notice: string | null) => void;
}) {
  const [decided, setDecided] = useState(show(desk.retention.decidedAfterDays));
  const [open, setOpen] = useState(show(desk.retention.openAfterDays));
  const [perCategory, setPerCategory] = useState<Record<string, string>>(
    Object.fromEntries(desk.categories.map((c) => [c.name, show(desk.retention.categories[c.name])])),
  );
  const [busy, setBusy] = useState(false);
  const [failure, setFailure] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(saved);
  const [dry, setDry] = useState<RetentionRun['run'] | null>(null);

  const act = async (what: () => Promise<void>) => {
    setBusy(true);
    setFailure(null);
    setNotice(null);
    try {
      await what();
    } catch (e) {
      setFailure(e instanceof ApiError ? e.message : String(e));
    } finally {
      setBusy(false);
    }
  };
  const save = (e: Event) => {
    e.preventDefault();
    void act(async () => {
      const categories: Record<string, number> = {};
      for (const [c, v] of Object.entries(perCategory)) {
        const d = days(v);
        if (d !== null) categories[c] = d;
      }
      await patch(`/desks/${desk.id}`, {
        retention: { decidedAfterDays: days(decided), openAfterDays: days(open), categories },
      });
      setDry(null);
      const message = 'Retention periods saved. The change is kept in the audit trail.';
      setNotice(message);
      onSaved(message);
    });
  };
  const dryRun = () =>
    void act(async () => {
      setDry((await post<RetentionRun>(`/desks/${desk.id}/retention/run?dryRun=1`)).run);
    });

  return (
    <section class="retention-panel" aria-labelledby="retention-title">
      <h2 id="retention-title">Retention</h2>
      <p class="lead">
        How long this desk keeps texts. Once a period has passed, the daily run erases the text, metadata, external id
        and source of an item; its verdicts, settlements and the audit trail stay. Leave a field empty to keep items
        without limit. Periods are whole days from 1 to 3650.
      </p>
      <form onSubmit={save}>
        <fieldset>
          <legend>Periods in days</legend>
          <label>
            Items never decided, after their import
            <input
              name="openAfterDays"
              inputMode="numeric"
              value={open}
              onInput={(e) => setOpen(e.currentTarget.value)}
            />
          </label>
          <label>
            Decided items, after their last decision
            <input
              name="decidedAfterDays"
              inputMode="numeric"
              value={decided}
              onInput={(e) => setDecided(e.currentTarget.value)}
            />
          </label>
          <p class="muted">A period for one category replaces the one above for items decided as that category.</p>
          {desk.categories.map((c) => (
            <label key={c.id}>
              Decided as {c.name}
              <input
                name={`category-${c.name}`}
                inputMode="numeric"
                value={perCategory[c.name] ?? ''}
                onInput={(e) => setPerCategory({ ...perCategory, [c.name]: e.currentTarget.value })}
              />
            </label>
          ))}
        </fieldset>
        <button type="submit" disabled={busy}>
          Save the periods
        </button>{' '}
        <button type="button" disabled={busy} onClick={dryRun}>
          Dry run: what would go now
        </button>
      </form>
      {failure && (
        <p class="error" role="alert">
          {failure}
        </p>
      )}
      {notice && (
        <p class="notice" role="status">
          {notice}
        </p>
      )}
      {dry && (
        <div class="table-box" tabIndex={0}>
          <table class="data retention-dry-run">
            <caption>
              The saved periods would erase {dry.items} item{dry.items === 1 ? '' : 's'} now (nothing was erased)
            </caption>
            <thead>
              <tr>
                <th scope="col">Items</th>
                <th scope="col" class="num">
                  Would go
                </th>
              </tr>
            </thead>
            <tbody>
              {Object.entries(dry.byCategory).map(([c, n]) => (
                <tr key={c}>
                  <th scope="row">decided as {c}</th>
                  <td class="num">{n}</td>
                </tr>
              ))}
              <tr>
                <th scope="row">decided, abstentions only</th>
                <td class="num">{dry.unlabelled}</td>
              </tr>
              <tr>
                <th scope="row">never decided</th>
                <td class="num">{dry.open}</td>
              </tr>
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
