import { once } from 'node:events';
import type { Response } from 'express';

/**
 * Writes lines to an HTTP response as they come, waiting for the socket to
 * drain whenever its buffer is full, so an export of any size holds only a
 * page of rows in memory. Stops early when the client goes away.
 */
export async function streamLines(res: Response, contentType: string, fileName: string, lines: AsyncIterable<string>): Promise<void> {
  res.status(200);
  res.setHeader('Content-Type', contentType);
  res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
  let gone = false;
  res.once('close', () => { gone = true; });
  for await (const line of lines) {
    if (gone) break;
    if (!res.write(line)) await Promise.race([once(res, 'drain'), once(res, 'close')]);
  }
  res.end();
}

/** One CSV field per RFC 4180 §2: quoted when it holds a comma, quote, CR or LF, with quotes doubled. */
export function csvField(v: unknown): string {
  const s = v === null || v === undefined ? '' : typeof v === 'string' ? v : typeof v === 'object' ? JSON.stringify(v) : String(v);
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

/** A CSV record ending in CRLF (RFC 4180 §2, rule 1). */
export const csvRecord = (fields: unknown[]): string => `${fields.map(csvField).join(',')}\r\n`;
