export {
  DEMO_POOL_SEED,
  DEMO_POOL_SIZE,
  DEMO_SHARES,
  generateMossbankPool,
  mossbankId,
  mossbankNdjson,
  type MossbankPoolOptions,
  type MossbankPost,
} from './mossbank-pool.js';
export {
  HARD_CASES,
  MOSSBANK_CATEGORIES,
  MOSSBANK_SEED_TERMS,
  type HardCase,
  type MossbankCategory,
} from './mossbank-vocabulary.js';
export {
  DEFAULT_SIMULATED_ANSWER,
  readingPauseMs,
  simulatedAnswer,
  type SimulatedAnswer,
  type SimulatedAnswerOptions,
} from './simulated-answer.js';
