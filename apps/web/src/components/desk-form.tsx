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
  | 'secondOpinionShare'
  | 'serveSimulatedSecondOpinions'
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

/** A share as the percentage typed in the form (0.9 → "90"; 0.999 → "99.9"). */
const asPercent = (share: number) => String(Math.round(share * 1000) / 10);
/** A percentage typed in the form as the share the API takes ("99.9" → 0.999), rounded to undo float noise. */
const fromPercent = (text: string) => Math.round(Number(text) * 100) / 10_000;

/** The category names kept from `before`, in their new order, differ from their old order. */
export function reordered(before: string[], after: string[]): boolean {
  const kept = after.filter((n) => before.includes(n));
  return kept.join('\n') !== before.filter((n) => kept.includes(n)).join('\n');
}

export const CALIBRATION_TRADE_OFF = {
  'per-category':
    'Per category: every category, rare ones included, is covered at the target, at the price of larger sets (more ambiguous calls).',
  marginal:
    'Over the whole pool: smaller sets, but the promise holds only on average, so a rare category can be missed far more often than the target says.',
};

/**
 * The desk's categories, seed terms and settings, for creating a desk and
 * for changing one. Targets and shares are typed as percentages. Categories
 * already used by verdicts cannot be removed or renamed, and once the desk
 * has verdicts their order is fixed (`orderFixed`: the number keys follow
 * it); the server refuses both too, and its reason is shown.
 */
export function DeskForm({
  initial,
  submitLabel,
  onSubmit,
  orderFixed = false,
}: {
  initial?: Desk;
  submitLabel: string;
  onSubmit: (v: DeskFormValue) => Promise<void>;
  orderFixed?: boolean;
}) {
  const [name, setName] = useState(initial?.name ?? '');
  const [cats, setCats] = useState(initial ? initial.categories.map((c) => c.name).join('\n') : '');
  const [seeds, setSeeds] = useState<Record<string, string>>(() =>
    Object.fromEntries(Object.entries(initial?.seedTerms ?? {}).map(([c, t]) => [c, t.join(', ')])),
  );
  const [target, setTarget] = useState(asPercent(initial?.coverageTarget ?? 0.9));
  const [calibration, setCalibration] = useState<DeskFormValue['calibration']>(initial?.calibration ?? 'per-category');
  const [randomShare, setRandomShare] = useState(asPercent(initial?.randomShare ?? 0.2));
  const [screenShare, setScreenShare] = useState(asPercent(initial?.screenShare ?? 0.5));
  const [secondShare, setSecondShare] = useState(asPercent(initial?.secondOpinionShare ?? 0.1));
  const [serveSimulated, setServeSimulated] = useState(initial?.serveSimulatedSecondOpinions ?? false);
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
    if (
      orderFixed &&
      initial &&
      reordered(
        initial.categories.map((c) => c.name),
        categories,
      )
    ) {
      setError(
        `The order of the categories cannot change once the desk has verdicts: the number keys of the queue follow it (key 1 is “${initial.categories[0].name}”). Keep the order and add new categories at the end.`,
      );
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
        coverageTarget: fromPercent(target),
        calibration,
        randomShare: fromPercent(randomShare),
        screenShare: fromPercent(screenShare),
        secondOpinionShare: fromPercent(secondShare),
        serveSimulatedSecondOpinions: serveSimulated,
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
          Categories, one per line (2 to 20; the order gives the number keys
          {orderFixed ? ', and is fixed now that the desk has verdicts: add new ones at the end' : ''}; a category used
          by verdicts can be neither removed nor retitled)
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
          Coverage target (%, 50 to 99.9)
          <input
            type="number"
            min="50"
            max="99.9"
            step="0.1"
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
          Share of random draws (%; they calibrate and check coverage)
          <input
            type="number"
            min="0"
            max="100"
            step="0.1"
            required
            value={randomShare}
            onInput={(e) => setRandomShare(e.currentTarget.value)}
          />
        </label>
        <label>
          Share of the review lane (flagged items, likeliest watched category first, once a model exists and a category
          is watched; %, with the random share at most 100)
          <input
            type="number"
            min="0"
            max="100"
            step="0.1"
            required
            value={screenShare}
            onInput={(e) => setScreenShare(e.currentTarget.value)}
          />
        </label>
        <label>
          Share of decided items served again to another reviewer for a second opinion (%; they measure agreement)
          <input
            type="number"
            min="0"
            max="100"
            step="0.1"
            required
            value={secondShare}
            onInput={(e) => setSecondShare(e.currentTarget.value)}
          />
        </label>
        <label class="check">
          <input
            type="checkbox"
            checked={serveSimulated}
            onChange={(e) => setServeSimulated(e.currentTarget.checked)}
          />{' '}
          Serve second opinions of the demo's simulated verdicts to people (off: people get real work and second
          opinions of each other's verdicts only)
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
