import type { Interval } from '../report-figures.js';

/** A share as a percentage with one decimal ("91.2 %"); a dash when there is none. */
export function percent(share: number | null | undefined): string {
  return share === null || share === undefined ? '–' : `${(share * 100).toFixed(1)} %`;
}

/** A 95 % interval as percentages ("87.4–94.1 %"). */
export function percentRange(i: Interval | null): string {
  return i ? `${(i.lower * 100).toFixed(1)}–${(i.upper * 100).toFixed(1)} %` : '–';
}

/** A figure with `digits` decimals; a dash when there is none. */
export function fixed(v: number | null | undefined, digits = 3): string {
  return v === null || v === undefined ? '–' : v.toFixed(digits);
}

/** An ISO time as "2026-12-02 01:23:45 UTC". */
export function utc(iso: string | null): string {
  return iso ? `${iso.slice(0, 10)} ${iso.slice(11, 19)} UTC` : '–';
}
