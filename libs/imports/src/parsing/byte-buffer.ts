/**
 * A growable byte buffer for the row being assembled. It grows by doubling
 * and is reused from row to row, so a file of many small rows allocates
 * once; callers keep it below the row cap, which bounds its size.
 */
export class ByteBuffer {
  private bytes = new Uint8Array(1024);
  private used = 0;

  get length(): number {
    return this.used;
  }

  /** Appends `source[start, end)`. */
  append(source: Uint8Array, start: number, end: number): void {
    const count = end - start;
    if (count <= 0) return;
    this.reserve(count);
    this.bytes.set(source.subarray(start, end), this.used);
    this.used += count;
  }

  /** Appends one byte. */
  push(byte: number): void {
    this.reserve(1);
    this.bytes[this.used] = byte;
    this.used += 1;
  }

  /** A copy of the content, independent of later changes. */
  copy(): Uint8Array {
    return this.bytes.slice(0, this.used);
  }

  /** A view of the content, valid until the next change. */
  view(): Uint8Array {
    return this.bytes.subarray(0, this.used);
  }

  clear(): void {
    this.used = 0;
  }

  private reserve(extra: number): void {
    const needed = this.used + extra;
    if (needed <= this.bytes.length) return;
    let size = this.bytes.length * 2;
    while (size < needed) size *= 2;
    const grown = new Uint8Array(size);
    grown.set(this.bytes.subarray(0, this.used));
    this.bytes = grown;
  }
}
