import { wilsonInterval } from '../../../libs/learning/src/intervals/binomial-intervals';
/** Number and time formatting shared by the screens. */
export const pct = (x: number | null | undefined, digits = 0): string =>
  x === null || x === undefined || Number.isNaN(x) ? '–' : `${(x * 100).toFixed(digits)} %`;
export const num = (x: number | null | undefined, digits = 2): string =>
  x === null || x === undefined || Number.isNaN(x) ? '–' : x.toFixed(digits);
export const count = (x: number): string => x.toLocaleString('en-GB');

export function when(iso: string | null | undefined): string {
  if (!iso) return '–';
  const d = new Date(iso);
  return d.toLocaleString('en-GB', {
    year: 'numeric',
    month: 'short',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
  });
}

/**
 * An instant in ISO 8601, UTC, to the second (`2026-01-31T12:00:05Z`): the trail's one format, the same as its date
 * filters (`2026-01-31`, read as UTC days) and the exports.
 */
export function isoWhen(iso: string | null | undefined): string {
  if (!iso) return '–';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : `${d.toISOString().slice(0, 19)}Z`;
}

/** m:ss for the timers on the queue screen. */
export function clock(ms: number): string {
  const s = Math.max(0, Math.round(ms / 1000));
  return `${Math.floor(s / 60)}:${String(s % 60).padStart(2, '0')}`;
}

/**
 * Below this many items a figure is too rough to read alone: the screens give its interval where one exists and mark
 * it "too few" otherwise (30 is the trade's usual floor for a share, common practice, no source).
 */
export const TOO_FEW = 30;

/** Wilson's 95 % interval for a share measured on n items (the library's, Wilson 1927), or null for n = 0. */
export function shareInterval(share: number, n: number): { lower: number; upper: number } | null {
  return n > 0 ? wilsonInterval(Math.round(share * n), n) : null;
}
