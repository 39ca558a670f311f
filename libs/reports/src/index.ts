export { ReportsModule, ReportsWorkModule } from './reports.module.js';
export { ReportWriter } from './report-writer.service.js';
export { ReportData, ReportNotPossible } from './report-data.service.js';
export { canonicalJson, canonicalValue, REPORT_DECIMALS } from './canonical-json.js';
export { renderReport } from './html/render-report.js';
export type * from './report-figures.js';
