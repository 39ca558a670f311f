/**
 * The page's only style sheet, inline. Prints on A4: page size and margins,
 * headings kept with what follows, tables and charts not split across pages,
 * charts scaled to the column so nothing is clipped.
 */
export const REPORT_CSS = `
@page { size: A4; margin: 16mm 14mm 18mm 14mm; }
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { font: 10.5pt/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "DejaVu Sans", sans-serif; color: #1b1f24; background: #fff; margin: 0 auto; max-width: 190mm; padding: 8mm 0; }
h1 { font-size: 18pt; margin: 0 0 2mm; }
h2 { font-size: 13pt; margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: 1px solid #c9ced6; break-after: avoid; page-break-after: avoid; }
h3 { font-size: 11pt; margin: 4mm 0 1mm; break-after: avoid; }
p { margin: 1.5mm 0; }
.lead { color: #3d4450; }
section { break-inside: auto; }
.keep { break-inside: avoid; page-break-inside: avoid; }
table { border-collapse: collapse; width: 100%; margin: 2mm 0; font-variant-numeric: tabular-nums; }
thead { display: table-header-group; }
tr { break-inside: avoid; page-break-inside: avoid; }
th, td { text-align: left; padding: 1mm 2mm; border-bottom: 1px solid #e1e4e8; vertical-align: top; }
th { background: #f3f5f7; font-weight: 600; }
td.num, th.num { text-align: right; white-space: nowrap; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 0.5mm 5mm; margin: 2mm 0; }
dl.facts dt { font-weight: 600; }
dl.facts dd { margin: 0; }
figure { margin: 3mm 0; break-inside: avoid; page-break-inside: avoid; }
figcaption { font-size: 9pt; color: #3d4450; }
svg.chart { display: block; width: 100%; max-width: 150mm; height: auto; overflow: visible; }
svg.chart text { font: 10px system-ui, sans-serif; fill: #1b1f24; }
svg.chart .chart-title { font-size: 12px; font-weight: 600; }
svg.chart .axis line { stroke: #1b1f24; stroke-width: 1; }
svg.chart .axis .grid { stroke: #e1e4e8; }
svg.chart .axis-label { font-size: 11px; }
svg.chart .diagonal { stroke: #6a737d; stroke-dasharray: 4 3; fill: none; }
svg.chart .bar { fill: #4f7bb8; fill-opacity: 0.75; }
svg.chart .line { stroke: #2f5d9a; stroke-width: 2; fill: none; }
svg.chart .point { fill: #2f5d9a; }
svg.chart .value { font-size: 9px; fill: #3d4450; }
.note { font-size: 9.5pt; color: #3d4450; }
.warn { border-left: 3px solid #b35900; padding: 1mm 3mm; background: #fff6ec; }
.cautions { border: 1px solid #c9ced6; padding: 2mm 4mm; background: #f8f9fa; }
code, .json { font: 9pt ui-monospace, "DejaVu Sans Mono", monospace; word-break: break-all; }
footer { margin-top: 8mm; font-size: 9pt; color: #3d4450; border-top: 1px solid #c9ced6; padding-top: 2mm; }
`;
