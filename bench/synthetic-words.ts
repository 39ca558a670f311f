/**
 * The words of the generated three-category posts (invented for the demo
 * scenario): each category's cue words and the shared filler. The screening
 * benchmark's pool and the tests' synthetic pool draw from these lists.
 */
export const SYNTHETIC_CATEGORIES = ['threat', 'harassment', 'ok'] as const;
export type SyntheticCategory = (typeof SYNTHETIC_CATEGORIES)[number];

export const SYNTHETIC_CUES: Readonly<Record<SyntheticCategory, readonly string[]>> = {
  threat: [
    'hurt',
    'find you',
    'regret',
    'waiting outside',
    'burn',
    'pay for this',
    'coming for',
    'know where you live',
  ],
  harassment: ['idiot', 'pathetic', 'loser', 'nobody likes you', 'shut up', 'clown', 'ugly', 'worthless'],
  ok: ['market', 'garden', 'meeting', 'thanks', 'recipe', 'bus route', 'library', 'weekend'],
};

export const SYNTHETIC_FILLER: readonly string[] = [
  'the',
  'a',
  'near',
  'park',
  'street',
  'today',
  'tonight',
  'neighbour',
  'post',
  'again',
  'really',
  'about',
  'square',
  'corner',
  'bakery',
  'rain',
];
