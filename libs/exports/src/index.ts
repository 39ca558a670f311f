export { csvField, csvLine, RAW, SPREADSHEET_SAFE, UTF8_BOM, type CsvOptions, type CsvValue } from './csv.js';
export { csvRequest, type CsvRequest } from './csv-query.js';
export { streamText } from './stream-text.js';
