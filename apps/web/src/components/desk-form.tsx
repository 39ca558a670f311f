import { useState } from 'preact/hooks';
import type { Desk } from '../api';

/** What the form sends: the desk's settings, with the categories as plain names. */
export type DeskFormValue = Pick<
  Desk,
  | 'name'
  | 'seedTerms'
  | 'coverageTarget'
  | 'calibration'
  | 'randomShare'
  | 'screenShare'
  | 'leaseSeconds'
  | 'strategy'
  | 'retrainEvery'
  | 'retrainAfterSeconds'
> & {
  categories: string[];
};

const lines = (s: string) =>
  s
    .split(/\r?\n/)
    .map((x) => x.trim())
    .filter(Boolean);
const terms = (s: string) =>
  s
    .split(/[,\n]/)
    .map((x) => x.trim())
    .filter(Boolean);

export const CALIBRATION_TRADE_OFF = {
  'per-category':
    'Per category: every category, rare ones included, is covered at the target, at the price of larger sets (more ambiguous calls).',
  marginal:
    'Over the whole pool: smaller sets, but the promise holds only on average, so a rare category can be missed far more often than the target says.',
};

/**
 * The desk's categories, seed terms and settings, for creating a desk and
 * for changing one. Categories already used by verdicts cannot be removed;
 * the server says so when it happens.
 */
export function DeskForm({
  initial,
  submitLabel,
  onSubmit,
}: {
  initial?: Desk;
  submitLabel: string;
  onSubmit: (v: DeskFormValue) => Promise<void>;
}) {
  const [name, setName] = useState(initial?.name ?? '');
  const [cats, setCats] = useState(initial ? initial.categories.map((c) => c.name).join('\n') : '');
  const [seeds, setSeeds] = useState<Record<string, string>>(() =>
    Object.fromEntries(Object.entries(initial?.seedTerms ?? {}).map(([c, t]) => [c, t.join(', ')])),
  );
  const [target, setTarget] = useState(String(initial?.coverageTarget ?? 0.9));
  const [calibration, setCalibration] = useState<DeskFormValue['calibration']>(initial?.calibration ?? 'per-category');
  const [randomShare, setRandomShare] = useState(String(initial?.randomShare ?? 0.2));
  const [screenShare, setScreenShare] = useState(String(initial?.screenShare ?? 0.5));
  const [leaseSeconds, setLeaseSeconds] = useState(String(initial?.leaseSeconds ?? 600));
  const [strategy, setStrategy] = useState(initial?.strategy ?? 'entropy');
  const [retrainEvery, setRetrainEvery] = useState(String(initial?.retrainEvery ?? 10));
  const [retrainAfter, setRetrainAfter] = useState(String(initial?.retrainAfterSeconds ?? 30));
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const categories = lines(cats);

  const submit = async (e: Event) => {
    e.preventDefault();
    setError(null);
    if (categories.length < 2 || categories.length > 20) {
      setError(`A desk needs 2 to 20 categories; there are ${categories.length}.`);
      return;
    }
    if (new Set(categories).size !== categories.length) {
      setError('Two categories have the same name.');
      return;
    }
    setBusy(true);
    try {
      await onSubmit({
        name: name.trim(),
        categories,
        seedTerms: Object.fromEntries(
          categories.map((c): [string, string[]] => [c, terms(seeds[c] ?? '')]).filter(([, t]) => t.length > 0),
        ),
        coverageTarget: Number(target),
        calibration,
        randomShare: Number(randomShare),
        screenShare: Number(screenShare),
        leaseSeconds: Number(leaseSeconds),
        strategy,
        retrainEvery: Number(retrainEvery),
        retrainAfterSeconds: Number(retrainAfter),
      });
    } catch (err) {
      setError((err as Error).message);
    } finally {
      setBusy(false);
    }
  };

  return (
    <form class="desk-form" onSubmit={(e) => void submit(e)}>
      <fieldset>
        <legend>The desk</legend>
        <label>
          Name
          <input required maxLength={200} value={name} onInput={(e) => setName(e.currentTarget.value)} />
        </label>
        <label>
          Categories, one per line (2 to 20; the order gives the number keys)
          <textarea
            required
            rows={4}
            value={cats}
            onInput={(e) => setCats(e.currentTarget.value)}
            placeholder={'threat\nharassment\nok'}
          />
        </label>
      </fieldset>
      {categories.length > 0 && (
        <fieldset>
          <legend>Seed terms</legend>
          <p class="muted">
            Words or phrases, separated by commas. Before a model exists, items that contain them are served first;
            reviewers see them marked in the text.
          </p>
          {categories.map((c) => (
            <label>
              {c}
              <input value={seeds[c] ?? ''} onInput={(e) => setSeeds({ ...seeds, [c]: e.currentTarget.value })} />
            </label>
          ))}
        </fieldset>
      )}
      <fieldset>
        <legend>Coverage and learning</legend>
        <label>
          Coverage target (0.50 to 0.999)
          <input
            type="number"
            min="0.5"
            max="0.999"
            step="0.01"
            required
            value={target}
            onInput={(e) => setTarget(e.currentTarget.value)}
          />
        </label>
        <div class="radio-group" role="radiogroup" aria-label="Calibration">
          {(['per-category', 'marginal'] as const).map((m) => (
            <label class="radio">
              <input
                type="radio"
                name="calibration"
                value={m}
                checked={calibration === m}
                onChange={() => setCalibration(m)}
              />{' '}
              {CALIBRATION_TRADE_OFF[m]}
            </label>
          ))}
        </div>
        <label>
          Share of random draws (they calibrate and check coverage; 0 to 1)
          <input
            type="number"
            min="0"
            max="1"
            step="0.01"
            required
            value={randomShare}
            onInput={(e) => setRandomShare(e.currentTarget.value)}
          />
        </label>
        <label>
          Share of the review lane (flagged items, likeliest watched category first, once a model exists and a category
          is watched; with the random share at most 1)
          <input
            type="number"
            min="0"
            max="1"
            step="0.01"
            required
            value={screenShare}
            onInput={(e) => setScreenShare(e.currentTarget.value)}
          />
        </label>
        <label>
          Uncertainty measure for the queue order
          <select value={strategy} onChange={(e) => setStrategy(e.currentTarget.value as Desk['strategy'])}>
            <option value="entropy">entropy</option>
            <option value="margin">margin</option>
            <option value="least-confidence">least confidence</option>
            <option value="set-size">prediction-set size, then entropy</option>
          </select>
        </label>
        <label>
          Retrain after this many new verdicts
          <input
            type="number"
            min="1"
            max="100000"
            required
            value={retrainEvery}
            onInput={(e) => setRetrainEvery(e.currentTarget.value)}
          />
        </label>
        <label>
          …or after this many seconds since the first unlearned verdict
          <input
            type="number"
            min="1"
            max="86400"
            required
            value={retrainAfter}
            onInput={(e) => setRetrainAfter(e.currentTarget.value)}
          />
        </label>
        <label>
          Hold an item for a reviewer (seconds)
          <input
            type="number"
            min="30"
            max="86400"
            required
            value={leaseSeconds}
            onInput={(e) => setLeaseSeconds(e.currentTarget.value)}
          />
        </label>
      </fieldset>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      <button type="submit" class="primary" disabled={busy}>
        {busy ? 'Saving…' : submitLabel}
      </button>
    </form>
  );
}
