export { csvField, csvLine } from './csv.js';
export { streamText } from './stream-text.js';
