import type { ComponentChildren } from 'preact';

/**
 * Small SVG charts with real axes: ticks, axis titles with units, and a
 * legend in words. Each chart also carries a text summary (`summary`) that
 * screen readers read instead of the drawing.
 */
interface Frame {
  width?: number;
  height?: number;
  xLabel: string;
  yLabel: string;
  x: [number, number];
  y: [number, number];
  xTicks: number[];
  yTicks: number[];
  xFormat?: (v: number) => string;
  yFormat?: (v: number) => string;
}

const M = { top: 12, right: 16, bottom: 44, left: 56 };

function scales(f: Frame) {
  const w = f.width ?? 560;
  const h = f.height ?? 260;
  const sx = (v: number) => M.left + ((v - f.x[0]) / (f.x[1] - f.x[0] || 1)) * (w - M.left - M.right);
  const sy = (v: number) => h - M.bottom - ((v - f.y[0]) / (f.y[1] - f.y[0] || 1)) * (h - M.top - M.bottom);
  return { w, h, sx, sy };
}

function Axes({ f, children, summary }: { f: Frame; children: ComponentChildren; summary: string }) {
  const { w, h, sx, sy } = scales(f);
  const fx = f.xFormat ?? String;
  const fy = f.yFormat ?? String;
  return (
    <svg class="chart" viewBox={`0 0 ${w} ${h}`} role="img" aria-label={summary} preserveAspectRatio="xMidYMid meet">
      <g class="grid">
        {f.yTicks.map((t) => (
          <line x1={M.left} x2={w - M.right} y1={sy(t)} y2={sy(t)} />
        ))}
      </g>
      <g class="axis x-axis">
        <line x1={M.left} x2={w - M.right} y1={h - M.bottom} y2={h - M.bottom} />
        {f.xTicks.map((t) => (
          <g>
            <line x1={sx(t)} x2={sx(t)} y1={h - M.bottom} y2={h - M.bottom + 5} />
            <text x={sx(t)} y={h - M.bottom + 18} text-anchor="middle">
              {fx(t)}
            </text>
          </g>
        ))}
        <text class="axis-title" x={(M.left + w - M.right) / 2} y={h - 6} text-anchor="middle">
          {f.xLabel}
        </text>
      </g>
      <g class="axis y-axis">
        <line x1={M.left} x2={M.left} y1={M.top} y2={h - M.bottom} />
        {f.yTicks.map((t) => (
          <g>
            <line x1={M.left - 5} x2={M.left} y1={sy(t)} y2={sy(t)} />
            <text x={M.left - 8} y={sy(t) + 4} text-anchor="end">
              {fy(t)}
            </text>
          </g>
        ))}
        <text
          class="axis-title"
          transform={`translate(14 ${(M.top + h - M.bottom) / 2}) rotate(-90)`}
          text-anchor="middle"
        >
          {f.yLabel}
        </text>
      </g>
      {children}
    </svg>
  );
}

export interface Series {
  name: string;
  className: string;
  points: Array<[number, number]>;
  /** An interval around the line: [x, lower, upper] per point, drawn as a shaded band. */
  band?: Array<[number, number, number]>;
}

/** Lines over a shared x axis, with an optional vertical marker (e.g. the chosen target). */
export function LineChart(props: Frame & { series: Series[]; marker?: number; summary: string }) {
  const { sx, sy } = scales(props);
  const { h } = scales(props);
  return (
    <figure class="chart-figure">
      <Axes f={props} summary={props.summary}>
        {props.marker !== undefined && (
          <line class="marker" x1={sx(props.marker)} x2={sx(props.marker)} y1={M.top} y2={h - M.bottom} />
        )}
        {props.series.map((s) => (
          <g class={`series ${s.className}`}>
            {s.band && s.band.length > 0 && (
              <polygon
                class="band"
                points={[
                  ...s.band.map(([x, , hi]) => `${sx(x)},${sy(hi)}`),
                  ...[...s.band].reverse().map(([x, lo]) => `${sx(x)},${sy(lo)}`),
                ].join(' ')}
              />
            )}
            <polyline fill="none" points={s.points.map(([x, y]) => `${sx(x)},${sy(y)}`).join(' ')} />
            {s.points.length <= 30 && s.points.map(([x, y]) => <circle cx={sx(x)} cy={sy(y)} r={3.5} />)}
          </g>
        ))}
      </Axes>
      <figcaption class="legend">
        {props.series.map((s) => (
          <span class={`key ${s.className}`}>
            <i aria-hidden="true" />
            {s.name}
          </span>
        ))}
      </figcaption>
    </figure>
  );
}

/** Horizontal bars with their values written at the end. */
export function BarChart({
  bars,
  unit,
  summary,
}: {
  bars: Array<{ label: string; value: number; className?: string }>;
  unit: string;
  summary: string;
}) {
  const max = Math.max(1, ...bars.map((b) => b.value));
  const rowH = 28;
  const labelW = 150;
  const w = 560;
  const h = bars.length * rowH + 40;
  const sx = (v: number) => labelW + (v / max) * (w - labelW - 70);
  const ticks = niceTicks(0, max, 4).filter((t) => Number.isInteger(t));
  return (
    <figure class="chart-figure">
      <svg class="chart" viewBox={`0 0 ${w} ${h}`} role="img" aria-label={summary}>
        <g class="axis x-axis">
          <line x1={labelW} x2={w - 70} y1={bars.length * rowH + 4} y2={bars.length * rowH + 4} />
          {ticks.map((t) => (
            <text x={sx(t)} y={bars.length * rowH + 20} text-anchor="middle">
              {t}
            </text>
          ))}
          <text class="axis-title" x={(labelW + w - 70) / 2} y={h - 4} text-anchor="middle">
            {unit}
          </text>
        </g>
        {bars.map((b, i) => (
          <g class={`bar ${b.className ?? ''}`}>
            <text class="bar-label" x={labelW - 8} y={i * rowH + 18} text-anchor="end">
              {b.label}
            </text>
            <rect x={labelW} y={i * rowH + 4} width={Math.max(1, sx(b.value) - labelW)} height={rowH - 10} />
            <text class="bar-value" x={sx(b.value) + 6} y={i * rowH + 18}>
              {b.value}
            </text>
          </g>
        ))}
      </svg>
    </figure>
  );
}

/** Realized proportions with their intervals against a promised level (the dashed line). */
export function IntervalChart({
  rows,
  target,
  summary,
}: {
  rows: Array<{ label: string; value: number | null; lower: number | null; upper: number | null; n: number }>;
  target: number;
  summary: string;
}) {
  const rowH = 32;
  const labelW = 170;
  const w = 560;
  const h = rows.length * rowH + 44;
  const lo = Math.min(0.5, ...rows.map((r) => r.lower ?? 1));
  const x0 = Math.floor(lo * 10) / 10;
  const sx = (v: number) => labelW + ((v - x0) / (1 - x0)) * (w - labelW - 24);
  const ticks = niceTicks(x0, 1, 5);
  return (
    <figure class="chart-figure">
      <svg class="chart" viewBox={`0 0 ${w} ${h}`} role="img" aria-label={summary}>
        <g class="axis x-axis">
          <line x1={labelW} x2={w - 24} y1={rows.length * rowH + 6} y2={rows.length * rowH + 6} />
          {ticks.map((t) => (
            <text x={sx(t)} y={rows.length * rowH + 22} text-anchor="middle">
              {Math.round(t * 100)}
            </text>
          ))}
          <text class="axis-title" x={(labelW + w - 24) / 2} y={h - 4} text-anchor="middle">
            realized coverage on random checks (%), 95 % Wilson interval
          </text>
        </g>
        <line class="marker" x1={sx(target)} x2={sx(target)} y1={0} y2={rows.length * rowH + 6} />
        {rows.map((r, i) => (
          <g class="interval">
            <text class="bar-label" x={labelW - 8} y={i * rowH + 20} text-anchor="end">
              {r.label} (n = {r.n})
            </text>
            {r.lower !== null && r.upper !== null && (
              <line x1={sx(r.lower)} x2={sx(r.upper)} y1={i * rowH + 16} y2={i * rowH + 16} />
            )}
            {r.value !== null && <circle cx={sx(r.value)} cy={i * rowH + 16} r={5} />}
          </g>
        ))}
      </svg>
      <figcaption class="legend">
        <span class="key marker-key">
          <i aria-hidden="true" />
          promised coverage {Math.round(target * 100)} %
        </span>
        <span class="key interval-key">
          <i aria-hidden="true" />
          realized, with 95 % interval
        </span>
      </figcaption>
    </figure>
  );
}

/** About `n` round tick values from lo to hi. */
export function niceTicks(lo: number, hi: number, n: number): number[] {
  const span = hi - lo || 1;
  const raw = span / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((k) => k * mag).find((s) => s >= raw) ?? raw;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Math.round(v * 1e6) / 1e6);
  return out;
}
