import type { Desk, Prediction } from '../api';
import { pct } from '../format';
import { PROBABILITIES_READING } from '../readings';
import { Reading } from './reading';

/** What the call needs to know of the desk: its categories' targets and the calibration mode. */
export type CallSettings = Pick<Desk, 'coverageTarget' | 'coverageTargets' | 'calibration'>;

/**
 * Why each category outside the set is ruled out, in plain words. Per category, a category's threshold lets
 * through all but its α share of that category's calibration items (Vovk 2012), so a category is ruled out when
 * fewer than α of its own items look this little like it.
 */
export function RuledOut({ prediction, settings }: { prediction: Prediction; settings: CallSettings }) {
  const out = Object.keys(prediction.probabilities).filter((c) => !prediction.set.includes(c));
  if (out.length === 0) return null;
  return (
    <ul class="ruled-out">
      {out.map((c) => {
        const alpha = 1 - (settings.coverageTargets[c] ?? settings.coverageTarget);
        return (
          <li>
            {settings.calibration === 'per-category'
              ? `${c} is ruled out: fewer than ${pct(alpha)} of ${c} posts look this little like ${c}.`
              : `${c} is ruled out: at the ${pct(1 - alpha)} coverage target its probability is below what the set needs.`}
          </li>
        );
      })}
    </ul>
  );
}

/**
 * The model's triage call in words first: the shape and the word carry the
 * meaning, colour only repeats it.
 */
export function CallStatement({ prediction, target }: { prediction: Prediction | null; target: number }) {
  if (!prediction) {
    return (
      <div class="call call-none" data-call="none">
        <p class="call-word">No model yet</p>
        <p class="call-detail">The desk learns from the first verdicts; until then there is no prediction to show.</p>
      </div>
    );
  }
  const level = pct(target);
  const { call, set } = prediction;
  const probs = prediction.probabilities;
  const ranked = Object.entries(probs).sort((a, b) => b[1] - a[1]);
  const top = ranked.length > 0 ? ranked[0][0] : null;
  // A set of one that is not the most probable category: say so rather than "Sure".
  const leftNotTop = call === 'sure' && top !== null && top !== set[0];
  return (
    <div class={`call call-${call}`} data-call={call}>
      {leftNotTop && (
        <>
          <p class="call-word">
            <span aria-hidden="true" class="call-icon">
              ◑
            </span>{' '}
            One category left: <strong>{set[0]}</strong>
          </p>
          <p class="call-detail">
            At {level} coverage the prediction set holds only {set[0]} (a “sure” call), yet the model finds {top} more
            probable ({pct(probs[top], 1)} against {pct(probs[set[0]], 1)}). Read it with care.
          </p>
        </>
      )}
      {call === 'sure' && !leftNotTop && (
        <>
          <p class="call-word">
            <span aria-hidden="true" class="call-icon">
              ●
            </span>{' '}
            Sure: <strong>{set[0]}</strong>
          </p>
          <p class="call-detail">
            Sure: at {level} coverage the prediction set holds one category (ambiguous: several; unfamiliar: none).
          </p>
        </>
      )}
      {call === 'ambiguous' && (
        <>
          <p class="call-word">
            <span aria-hidden="true" class="call-icon">
              ◐
            </span>{' '}
            Ambiguous:{' '}
            <strong>
              {set.length === 2 ? set.join(' or ') : `${set.slice(0, -1).join(', ')} or ${set[set.length - 1]}`}
            </strong>
          </p>
          <p class="call-detail">
            At {level} coverage the model cannot narrow it to one of these {set.length}.
          </p>
        </>
      )}
      {call === 'unfamiliar' && (
        <>
          <p class="call-word">
            <span aria-hidden="true" class="call-icon">
              ○
            </span>{' '}
            Unfamiliar
          </p>
          <p class="call-detail">
            This text is unlike anything calibrated so far: the set is empty at {level} coverage. Read it without the
            model's help.
          </p>
        </>
      )}
    </div>
  );
}

/** Probabilities as labelled bars, in the order of the desk's keys (`order`), else highest first. */
export function Probabilities({ prediction, order }: { prediction: Prediction; order?: string[] }) {
  const rank = (c: string) => (order ? order.indexOf(c) : -1);
  const rows = Object.entries(prediction.probabilities).sort((a, b) => (order ? rank(a[0]) - rank(b[0]) : b[1] - a[1]));
  return (
    <table class="probabilities">
      <caption>Model probabilities (version {prediction.modelVersion})</caption>
      <tbody>
        {rows.map(([c, p]) => (
          <tr class={prediction.set.includes(c) ? 'in-set' : ''}>
            <th scope="row">
              {c}
              {prediction.set.includes(c) && <span class="in-set-mark"> · in set</span>}
            </th>
            <td>
              <span class="prob-bar" style={{ width: `${Math.max(1, p * 100)}%` }} />
            </td>
            <td class="num">{pct(p, 1)}</td>
          </tr>
        ))}
      </tbody>
      <tfoot>
        <tr>
          <td colSpan={3}>
            <Reading text={`Probabilities: ${PROBABILITIES_READING}.`} />
          </td>
        </tr>
      </tfoot>
    </table>
  );
}
