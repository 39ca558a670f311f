// Types for the parts of tar-stream 2.x that the backup archive uses (the package ships none). Read from its
// README and source (pack.js, extract.js, headers.js).
declare module 'tar-stream' {
  import type { Readable, Writable } from 'node:stream';

  export interface Headers {
    name: string;
    size?: number;
    mode?: number;
    mtime?: Date;
    type?: 'file' | 'directory' | 'symlink' | 'link' | null;
  }

  export interface Pack extends Readable {
    entry(header: Headers, buffer: Buffer | string, callback?: (err?: Error | null) => void): Writable;
    entry(header: Headers, callback?: (err?: Error | null) => void): Writable;
    finalize(): void;
  }

  export interface Extract extends Writable {
    on(event: 'entry', listener: (header: Headers, stream: Readable, next: (err?: Error) => void) => void): this;
    on(event: 'finish' | 'close', listener: () => void): this;
    on(event: 'error', listener: (err: Error) => void): this;
  }

  export function pack(): Pack;
  export function extract(): Extract;
}
