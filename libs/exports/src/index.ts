export { csvField, csvLine, type CsvValue } from './csv.js';
export { streamText } from './stream-text.js';
