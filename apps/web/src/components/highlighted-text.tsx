import type { Highlight } from '../api';
import { RevealedText } from './revealed-text';

/**
 * The item's text with its seed-term matches marked. Each mark carries the
 * category's number (the key that decides for it) as well as its tint, so
 * the highlight does not rely on colour alone. Bidirectional controls and
 * zero-width characters show as markers (RevealedText).
 */
export function HighlightedText({
  text,
  highlights,
  categories,
}: {
  text: string;
  highlights: Highlight[];
  categories: string[];
}) {
  const parts = [];
  let at = 0;
  for (const h of [...highlights].sort((a, b) => a.start - b.start)) {
    if (h.start < at || h.end > text.length) continue;
    if (h.start > at) parts.push(<RevealedText text={text.slice(at, h.start)} />);
    const index = categories.indexOf(h.category);
    parts.push(
      <mark class={`seed seed-${index % 8}`} title={`seed term of “${h.category}”`} data-category={h.category}>
        <RevealedText text={text.slice(h.start, h.end)} />
        <sup class="seed-key" aria-label={`seed term of ${h.category}`}>
          {index + 1}
        </sup>
      </mark>,
    );
    at = h.end;
  }
  if (at < text.length) parts.push(<RevealedText text={text.slice(at)} />);
  return <p class="item-text">{parts}</p>;
}
