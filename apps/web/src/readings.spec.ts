import { describe, expect, it } from 'vitest';
import {
  alphaReading,
  kappaBand,
  kappaReading,
  keywordPrecisionReading,
  keywordRecallReading,
  logLossReading,
} from './readings';

describe('the readings of a keyword list against the random draws', () => {
  it('says how far the count runs high or low, in tenths', () => {
    expect(keywordPrecisionReading(0.62)).toBe('about 4 in 10 matches are something else: the count runs high');
    expect(keywordPrecisionReading(0.97)).toBe('nearly every match is of the category');
    expect(keywordPrecisionReading(0.02)).toBe('almost all matches are something else: the count runs high');
    expect(keywordRecallReading(0.5)).toBe('the words miss about 5 in 10 of the category’s items: the count runs low');
    expect(keywordRecallReading(0.96)).toBe('the words catch nearly all of the category');
    expect(keywordPrecisionReading(null)).toBe('no random draw matches yet');
    expect(keywordRecallReading(undefined)).toBe('no random draw of the category yet');
  });
});

describe('the plain readings of the agreement figures', () => {
  // Bands of Landis & Koch (1977), Biometrics 33(1):159–174, p. 165: <0.00 poor, 0.00–0.20 slight, 0.21–0.40 fair,
  // 0.41–0.60 moderate, 0.61–0.80 substantial, 0.81–1.00 almost perfect [memory for the page number].
  it.each([
    [0, 'slight agreement'],
    [0.2, 'slight agreement'],
    [0.204, 'slight agreement'],
    [0.21, 'fair agreement'],
    [0.4, 'fair agreement'],
    [0.41, 'moderate agreement'],
    [0.6, 'moderate agreement'],
    [0.61, 'substantial agreement'],
    [0.8, 'substantial agreement'],
    [0.81, 'almost perfect agreement'],
    [1, 'almost perfect agreement'],
  ])('kappa %f reads as %s', (k, words) => {
    expect(kappaBand(k)).toBe(words);
  });

  it('names a kappa below zero worse than chance, and the bands’ source', () => {
    expect(kappaReading(-0.05)).toMatch(/^worse than chance/);
    expect(kappaReading(-0.05)).toContain('Landis & Koch 1977');
    // Cohen (1960), Table 2: κ = 0.491525 (printed .492), a moderate agreement on these bands.
    expect(kappaReading(0.491525)).toBe('moderate agreement (Landis & Koch 1977)');
    expect(kappaReading(null)).toBe('not enough shared verdicts to read');
  });

  it('reads alpha on Krippendorff’s own thresholds and on the kappa bands', () => {
    // Krippendorff (2011), section C: nominal α = 0.743421, between his 0.667 and 0.800.
    expect(alphaReading(0.743421)).toBe(
      'good enough for tentative conclusions only (Krippendorff 2004); substantial agreement on the Landis & Koch 1977 bands',
    );
    expect(alphaReading(0.8)).toMatch(/^reliable enough/);
    expect(alphaReading(0.5)).toMatch(/^too low to rely on/);
    expect(alphaReading(-0.2)).toMatch(/^worse than chance/);
  });

  it('gives log loss the score of equal odds, ln k', () => {
    expect(logLossReading(0.5, 3)).toContain('1.10');
    expect(logLossReading(null, 3)).toBe('not measured');
  });
});
