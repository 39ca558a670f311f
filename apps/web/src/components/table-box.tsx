import type { ComponentChildren } from 'preact';

/**
 * A wide table's own scrolling box: the page never scrolls sideways, the
 * table does. Focusable and labelled so it can be scrolled with the keyboard.
 */
export function TableBox({ label, children }: { label: string; children: ComponentChildren }) {
  return (
    <div class="table-box" role="region" aria-label={label} tabIndex={0}>
      {children}
    </div>
  );
}
