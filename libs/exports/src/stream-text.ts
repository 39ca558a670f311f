import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Response } from 'express';

/**
 * Streams text into an HTTP response as a download. `Readable.from` pulls
 * the next chunk only when the socket has taken the previous one
 * (back-pressure), so an export of any size holds one page in memory, and
 * `pipeline` stops reading when the client goes away. Once the headers are
 * sent an error can only cut the body short; `onError` hears of it.
 */
export async function streamText(
  res: Response,
  contentType: string,
  fileName: string,
  chunks: AsyncIterable<string>,
  onError: (e: Error) => void,
): Promise<void> {
  res.status(200);
  res.setHeader('Content-Type', contentType);
  res.setHeader('Content-Disposition', `attachment; filename="${fileName}"`);
  res.setHeader('Cache-Control', 'no-store');
  try {
    await pipeline(Readable.from(chunks, { objectMode: false, highWaterMark: 1 }), res);
  } catch (e) {
    onError(e as Error);
    res.destroy();
  }
}
