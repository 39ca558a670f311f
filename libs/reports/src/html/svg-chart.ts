import { html, type Html } from './escape-html.js';

export interface Axis {
  min: number;
  max: number;
  ticks: number[];
  /** Axis title, with its unit. */
  label: string;
  format: (v: number) => string;
}

export interface ChartFrame {
  /** x in data units → SVG x. */
  x(v: number): number;
  /** y in data units → SVG y. */
  y(v: number): number;
  /** The whole chart: axes, ticks, labels, then `content` drawn inside the plot area. */
  svg(content: Html): Html;
}

const WIDTH = 520;
const HEIGHT = 300;
const MARGIN = { left: 58, right: 16, top: 30, bottom: 48 };

/**
 * One small frame for every chart of the report: a fixed viewBox (so it
 * scales to the page and never clips in print), both axes with ticks and
 * tick labels, axis titles, a chart title, and an accessible description.
 */
export function chartFrame(options: {
  title: string;
  description: string;
  x: Axis;
  y: Axis;
  className: string;
}): ChartFrame {
  const { x, y } = options;
  const plotW = WIDTH - MARGIN.left - MARGIN.right;
  const plotH = HEIGHT - MARGIN.top - MARGIN.bottom;
  const sx = (v: number) => round(MARGIN.left + ((v - x.min) / (x.max - x.min || 1)) * plotW);
  const sy = (v: number) => round(MARGIN.top + plotH - ((v - y.min) / (y.max - y.min || 1)) * plotH);
  const bottom = MARGIN.top + plotH;
  const xAxis = html`<g class="axis x-axis"><line x1="${MARGIN.left}" y1="${bottom}" x2="${MARGIN.left + plotW}" y2="${bottom}"/>${x.ticks.map((t) => html`<line x1="${sx(t)}" y1="${bottom}" x2="${sx(t)}" y2="${bottom + 5}"/><text x="${sx(t)}" y="${bottom + 18}" text-anchor="middle">${x.format(t)}</text>`)}<text class="axis-label" x="${MARGIN.left + plotW / 2}" y="${HEIGHT - 8}" text-anchor="middle">${x.label}</text></g>`;
  const yAxis = html`<g class="axis y-axis"><line x1="${MARGIN.left}" y1="${MARGIN.top}" x2="${MARGIN.left}" y2="${bottom}"/>${y.ticks.map((t) => html`<line x1="${MARGIN.left - 5}" y1="${sy(t)}" x2="${MARGIN.left}" y2="${sy(t)}"/><line class="grid" x1="${MARGIN.left}" y1="${sy(t)}" x2="${MARGIN.left + plotW}" y2="${sy(t)}"/><text x="${MARGIN.left - 8}" y="${sy(t) + 4}" text-anchor="end">${y.format(t)}</text>`)}<text class="axis-label" transform="translate(14 ${MARGIN.top + plotH / 2}) rotate(-90)" text-anchor="middle">${y.label}</text></g>`;
  return {
    x: sx,
    y: sy,
    svg: (content) =>
      html`<svg class="chart ${options.className}" viewBox="0 0 ${WIDTH} ${HEIGHT}" width="${WIDTH}" height="${HEIGHT}" role="img" aria-labelledby="${options.className}-title ${options.className}-desc" xmlns="http://www.w3.org/2000/svg"><title id="${options.className}-title">${options.title}</title><desc id="${options.className}-desc">${options.description}</desc><text class="chart-title" x="${MARGIN.left}" y="18">${options.title}</text>${xAxis}${yAxis}<g class="data">${content}</g></svg>`,
  };
}

/** Ticks from `min` to `max` in steps of `step` (rounded so 0.1 steps print as 0.1, not 0.30000000000000004). */
export function ticks(min: number, max: number, step: number): number[] {
  if (!(step > 0)) throw new RangeError(`step must be positive, got ${step}`);
  const out: number[] = [];
  for (let v = min; v <= max + step / 1e6; v += step) out.push(Math.round(v * 1e9) / 1e9);
  return out;
}

function round(v: number): number {
  return Math.round(v * 100) / 100;
}
