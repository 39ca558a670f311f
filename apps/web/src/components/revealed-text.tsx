import { revealHidden } from '../hidden-characters';

/**
 * Text with every bidirectional control and zero-width character shown as a small boxed marker (its short name,
 * e.g. RLO), named in full for the mouse (title) and for screen readers (aria-label). The marker stands in for the
 * character, so an override cannot reorder what follows it; nothing is dropped.
 */
export function RevealedText({ text }: { text: string }) {
  return (
    <>
      {revealHidden(text).map((p) =>
        p.kind === 'text' ? (
          p.text
        ) : (
          <span
            class={p.bidi ? 'hidden-char bidi' : 'hidden-char'}
            role="img"
            title={`${p.codePoint} ${p.name}: ${p.bidi ? 'changes the direction of the text' : 'invisible'} (shown here by this marker)`}
            aria-label={`hidden character ${p.codePoint}, ${p.name.toLowerCase()}`}
            data-code-point={p.codePoint}
          >
            {p.short}
          </span>
        ),
      )}
    </>
  );
}
