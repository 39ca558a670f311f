import { describe, expect, it } from 'vitest';
import { ppmi } from './ppmi.js';
import { sparseMatrixFromDense, sparseMatrixToDense } from './sparse-matrix.js';

// Jurafsky & Martin, Speech and Language Processing, 3rd ed. draft, chapter "Vector Semantics and
// Embeddings": co-occurrence counts of four words with five contexts in Wikipedia (the figure
// "Co-occurrence counts for four words in 5 contexts…", Fig. 6.9 in the drafts we recall; figure
// numbers move between drafts). The counts, the PPMI figure (Fig. 6.11) and the worked value for
// information/data are recalled from memory [memory]; every one of them agrees with a recomputation
// from the counts to the printed precision, which is what this test asserts.
//                 computer  data  result  pie  sugar
const WORDS = ['cherry', 'strawberry', 'digital', 'information'];
const COUNTS = [
  [2, 8, 9, 442, 25],
  [0, 0, 1, 60, 19],
  [1670, 1683, 85, 5, 4],
  [3325, 3982, 378, 5, 13],
];
// PPMI as printed, two decimals (so compared within 0.005).
const PRINTED_PPMI = [
  [0, 0, 0, 4.38, 3.3],
  [0, 0, 0, 4.1, 5.51],
  [0.18, 0.01, 0, 0, 0],
  [0.02, 0.09, 0.28, 0, 0],
];

describe('ppmi', () => {
  it('reproduces the PPMI table of Jurafsky & Martin (alpha = 1)', () => {
    const table = sparseMatrixToDense(ppmi(sparseMatrixFromDense(COUNTS), { alpha: 1 }));
    for (let w = 0; w < WORDS.length; w++) {
      for (let c = 0; c < 5; c++) {
        expect(Math.abs(table[w][c] - PRINTED_PPMI[w][c]), `${WORDS[w]} × context ${c}`).toBeLessThan(0.005);
      }
    }
    // The chapter's worked cell: ppmi(information, data) = log2(.3399 / (.6575 · .4842)) = .0944 [memory].
    expect(Math.abs(table[3][1] - 0.0944)).toBeLessThan(5e-5);
  });

  it('smooths the context distribution with alpha = 0.75 (recomputed by hand)', () => {
    // Context totals f(c): computer 4997, data 5673, result 473, pie 512, sugar 61.
    // f(c)^0.75: 594.3360, 653.6716, 101.4252, 107.6347, 21.8272; sum 1478.8946.
    // P_0.75(c): 0.401879, 0.442000, 0.068582, 0.072781, 0.014759.
    // Word totals f(w): cherry 486, strawberry 80, digital 3447, information 7703.
    // PPMI_0.75(w, c) = log2( f(w,c) / (f(w) · P_0.75(c)) ):
    //   cherry/pie         log2(442 / (486 · 0.072781))   = log2(12.4960) = 3.643394
    //   strawberry/sugar   log2(19 / (80 · 0.014759))     = log2(16.0917) = 4.008250
    //   digital/computer   log2(1670 / (3447 · 0.401879)) = log2(1.20553) = 0.269675
    //   information/data   log2(3982 / (7703 · 0.442000)) = log2(1.16954) = 0.225954
    //   information/result log2(378 / (7703 · 0.068582))  = log2(0.71552) < 0, so 0 (it was 0.28 unsmoothed)
    const table = sparseMatrixToDense(ppmi(sparseMatrixFromDense(COUNTS)));
    const TOL = 5e-5;
    expect(Math.abs(table[0][3] - 3.643394)).toBeLessThan(TOL);
    expect(Math.abs(table[1][4] - 4.00825)).toBeLessThan(TOL);
    expect(Math.abs(table[2][0] - 0.269675)).toBeLessThan(TOL);
    expect(Math.abs(table[3][1] - 0.225954)).toBeLessThan(TOL);
    expect(table[3][2]).toBe(0);
    // Smoothing lowers the association with the rare context "sugar" and raises it with frequent ones.
    const plain = sparseMatrixToDense(ppmi(sparseMatrixFromDense(COUNTS), { alpha: 1 }));
    expect(table[0][4]).toBeLessThan(plain[0][4]);
    expect(table[2][0]).toBeGreaterThan(plain[2][0]);
  });

  it('keeps only positive cells and checks its arguments', () => {
    const m = ppmi(sparseMatrixFromDense(COUNTS));
    expect(Array.from(m.values).every((v) => v > 0)).toBe(true);
    expect(() => ppmi(sparseMatrixFromDense(COUNTS), { alpha: 0 })).toThrow(RangeError);
    expect(() => ppmi(sparseMatrixFromDense(COUNTS), { alpha: 1.5 })).toThrow(/alpha/);
    expect(() => ppmi(sparseMatrixFromDense([[1, -2]]))).toThrow(/non-negative/);
  });
});
