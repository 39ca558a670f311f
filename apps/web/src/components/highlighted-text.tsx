import type { Highlight } from '../api';

/**
 * The item's text with its seed-term matches marked. Each mark carries the
 * category's number (the key that decides for it) as well as its tint, so
 * the highlight does not rely on colour alone.
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
    if (h.start > at) parts.push(text.slice(at, h.start));
    const index = categories.indexOf(h.category);
    parts.push(
      <mark class={`seed seed-${index % 8}`} title={`seed term of “${h.category}”`} data-category={h.category}>
        {text.slice(h.start, h.end)}
        <sup class="seed-key" aria-label={`seed term of ${h.category}`}>
          {index + 1}
        </sup>
      </mark>,
    );
    at = h.end;
  }
  if (at < text.length) parts.push(text.slice(at));
  return <p class="item-text">{parts}</p>;
}
