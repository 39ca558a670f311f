import type { ReportFigures } from '../report-figures.js';
import { html, trusted } from './escape-html.js';
import { prevalenceSection } from './prevalence-section.js';
import {
  activitySection,
  agreementSection,
  alertsSection,
  assumptionsSection,
  cautionsSection,
  countsSection,
  coverageSection,
  headerSection,
  learningCurveSection,
  poolSection,
  qualitySection,
  settingsChangesSection,
} from './report-sections.js';
import { REPORT_CSS } from './report-style.js';

/**
 * The report as one self-contained HTML page: inline style and inline SVG,
 * no script, no external request of any kind (the page's own policy forbids
 * them), made only from the figures, so the same figures give the same page.
 *
 * @param figuresSha256 SHA-256 of the JSON file with the same figures, printed in the footer
 */
export function renderReport(f: ReportFigures, figuresSha256: string): string {
  const page = html`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${`Model report: ${f.desk.name}, version ${f.version.version}`}</title>
<style>${trusted(REPORT_CSS)}</style>
</head>
<body>
${headerSection(f)}
<main>
${coverageSection(f)}
${countsSection(f)}
${poolSection(f)}
${qualitySection(f)}
${learningCurveSection(f)}
${prevalenceSection(f)}
${agreementSection(f)}
${activitySection(f)}
${alertsSection(f)}
${settingsChangesSection(f)}
${assumptionsSection(f)}
${cautionsSection()}
</main>
<footer>Report format ${f.format} ${f.formatVersion}. The JSON file of the same figures has SHA-256 <code>${figuresSha256}</code>.</footer>
</body>
</html>
`;
  return page.text;
}
