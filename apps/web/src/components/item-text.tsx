import { useState } from 'preact/hooks';
import { post, type ItemText } from '../api';
import { isoWhen } from '../format';
import { HighlightedText } from './highlighted-text';

/**
 * An item's text, fetched only when asked for (a click, or `t` on the trail): each request is recorded as a read in
 * the audit trail by the server, so the button says so.
 */
export function ItemTextOnDemand({
  itemId,
  categories,
  erasedAt,
}: {
  itemId: number;
  categories: string[];
  erasedAt?: string | null;
}) {
  const [shown, setShown] = useState<ItemText | null>(null);
  const [error, setError] = useState<string | null>(null);
  if (erasedAt) return <p class="muted erased">Text erased on {isoWhen(erasedAt)}.</p>;
  if (shown?.erasedAt) return <p class="muted erased">Text erased on {isoWhen(shown.erasedAt)}.</p>;
  if (shown?.text !== undefined && shown.text !== null)
    return (
      <div class="item-text-shown" data-item={itemId}>
        <HighlightedText text={shown.text} highlights={shown.highlights} categories={categories} />
      </div>
    );
  return (
    <div class="item-text-ask">
      <button
        type="button"
        class="show-text"
        data-item={itemId}
        onClick={() =>
          void post<ItemText>(`/items/${itemId}/read`).then(
            (t) => {
              setShown(t);
              setError(null);
            },
            (e: unknown) => setError((e as Error).message),
          )
        }
      >
        Show text
      </button>{' '}
      <span class="muted">each reading is recorded in the audit trail</span>
      {error && (
        <span class="error" role="alert">
          {error}
        </span>
      )}
    </div>
  );
}
