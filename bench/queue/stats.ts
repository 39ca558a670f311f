/** Latency summaries for the queue benchmark. */

/** Growable list of latency samples in milliseconds. */
export class Samples {
  private values = new Float64Array(1 << 14);
  private n = 0;

  add(ms: number): void {
    if (this.n === this.values.length) {
      const bigger = new Float64Array(this.values.length * 2);
      bigger.set(this.values);
      this.values = bigger;
    }
    this.values[this.n++] = ms;
  }

  get count(): number {
    return this.n;
  }

  /** Nearest-rank percentiles (the smallest sample with at least p % of the samples at or below it), rounded to 0.01 ms. */
  summary(): { p50: number | null; p95: number | null; p99: number | null; max: number | null; mean: number | null } {
    if (this.n === 0) return { p50: null, p95: null, p99: null, max: null, mean: null };
    const sorted = this.values.slice(0, this.n).sort();
    const rank = (p: number) => round2(sorted[Math.max(0, Math.ceil((p / 100) * this.n) - 1)]);
    let sum = 0;
    for (const v of sorted) sum += v;
    return {
      p50: rank(50),
      p95: rank(95),
      p99: rank(99),
      max: round2(sorted[this.n - 1]),
      mean: round2(sum / this.n),
    };
  }
}

export const round2 = (x: number): number => Math.round(x * 100) / 100;
