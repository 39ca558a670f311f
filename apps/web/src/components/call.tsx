import type { Prediction } from '../api';
import { pct } from '../format';

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
  return (
    <div class={`call call-${call}`} data-call={call}>
      {call === 'sure' && (
        <>
          <p class="call-word">
            <span aria-hidden="true" class="call-icon">
              ●
            </span>{' '}
            Sure: <strong>{set[0]}</strong>
          </p>
          <p class="call-detail">At {level} coverage the prediction set holds one category.</p>
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

/** Probabilities as labelled bars, highest first. */
export function Probabilities({ prediction }: { prediction: Prediction }) {
  const rows = Object.entries(prediction.probabilities).sort((a, b) => b[1] - a[1]);
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
    </table>
  );
}
