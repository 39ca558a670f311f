/**
 * Cribra's learning core: featurisation, classifier, uncertainty sampling,
 * split-conformal prediction sets, intervals and quality metrics. Pure
 * TypeScript: no framework, no database, no I/O.
 */
export {
  checkSeedTerms,
  compileSeedTerms,
  MAX_SEED_TERM_LENGTH,
  MAX_SEED_TERMS,
  MIN_WORD_ENDING_STEM,
  parseSeedTerm,
} from './text/seed-terms.js';
export type { ParsedSeedTerm, SeedMatch, SeedTermMatcher } from './text/seed-terms.js';

export { murmur3String, murmur3x86_32 } from './hashing/murmur3.js';
export { createRng, randomInt, shuffleInPlace } from './random/rng.js';
export type { Rng } from './random/rng.js';
export { assertSparseVector, cosineSimilarity, sparseDot, sparseNorm } from './features/sparse-vector.js';
export type { SparseVector } from './features/sparse-vector.js';
export { createFeaturizer, DEFAULT_HASH_BITS, normalizeForFeatures } from './features/hashed-featurizer.js';
export type { Featurizer, FeaturizerOptions } from './features/hashed-featurizer.js';
export { IdfTable } from './features/idf-table.js';
export type { IdfTableJson } from './features/idf-table.js';
export { tfidf } from './features/tfidf.js';
export type { TfidfOptions } from './features/tfidf.js';

export { LogisticModel } from './classifier/logistic-model.js';
export { LOGISTIC_MODEL_VERSION } from './classifier/logistic-model.js';
export type {
  LogisticLink,
  LogisticModelJson,
  OneVsRestTrainingSummary,
  SoftmaxTrainingSummary,
  TrainingSummary,
} from './classifier/logistic-model.js';
export {
  DEFAULT_C,
  DEFAULT_MAX_ITERATIONS,
  DEFAULT_TOLERANCE,
  trainLogisticModel,
} from './classifier/train-logistic.js';
export type { ClassWeight, TrainOptions } from './classifier/train-logistic.js';
export { minimizeLbfgs } from './classifier/lbfgs.js';
export {
  featurizerSettings,
  MODEL_EXPORT_VERSION,
  modelExport,
  readModelExport,
  remapCategories,
  sameFeaturizer,
} from './classifier/model-export.js';
export type { FeaturizerSettings, ModelExport, ModelExportJson } from './classifier/model-export.js';
export { DEFAULT_C_GRID, tuneC } from './classifier/tune-c.js';
export type { TuneCOptions, TuneCResult } from './classifier/tune-c.js';
export type { LbfgsOptions, LbfgsResult, Objective } from './classifier/lbfgs.js';

export { assertAlpha, assertLabel, assertProbabilities, PROBABILITY_SUM_TOLERANCE } from './probability-checks.js';
export { entropy, leastConfidence, margin, uncertainty } from './uncertainty/uncertainty-scores.js';
export type { UncertaintyStrategy } from './uncertainty/uncertainty-scores.js';
export { apsScore, lacScore, rankByProbability } from './conformal/nonconformity.js';
export {
  calibrationSizeNeeded,
  conformalRank,
  conformalThreshold,
  RANK_TOLERANCE,
} from './conformal/conformal-quantile.js';
export { ConformalCalibration } from './conformal/conformal-calibration.js';
export type {
  CalibrationMode,
  ConformalCalibrationJson,
  ConformalThreshold,
  NonconformityScore,
  ThresholdOptions,
} from './conformal/conformal-calibration.js';
export {
  assertConfidence,
  coverageShortfallProbability,
  trainingConditionalRank,
  trainingConditionalSizeNeeded,
} from './conformal/training-conditional.js';
export { predictionSet, predictionSetRule, SCORE_TIE_TOLERANCE, triageCall } from './conformal/prediction-set.js';
export type { PredictionSet, PredictionSetOptions, TriageCall } from './conformal/prediction-set.js';

export {
  clopperPearsonInterval,
  wilsonContinuityCorrectedInterval,
  wilsonInterval,
  Z_95,
} from './intervals/binomial-intervals.js';
export type { ProportionInterval } from './intervals/binomial-intervals.js';
export { inverseRegularizedIncompleteBeta, logGamma, regularizedIncompleteBeta } from './intervals/incomplete-beta.js';
export { binomialCdf, binomialQuantile } from './intervals/binomial-quantile.js';
export { normalQuantile, twoSidedZ } from './intervals/normal-quantile.js';
export { accuracy } from './metrics/accuracy.js';
export { macroF1 } from './metrics/macro-f1.js';
export { LOG_LOSS_EPSILON, logLoss } from './metrics/log-loss.js';
export { brierScore } from './metrics/brier-score.js';
export { expectedCalibrationError, reliabilityBins, topLabelConfidence } from './metrics/calibration-error.js';
export type { ReliabilityBin } from './metrics/calibration-error.js';
export { normalizedTextHash, normalizeForDuplicates } from './text/normalized-text-hash.js';
export { pickBatch } from './uncertainty/batch-picker.js';
export type { BatchCandidate, BatchDraw, BatchOptions, BatchPick } from './uncertainty/batch-picker.js';

export {
  prepareRehearsal,
  rehearsalWarnings,
  runRehearsal,
  TRANSFER_MIN_PER_CATEGORY,
  tuneRehearsalC,
} from './rehearsal/rehearsal.js';
export type {
  CoverageFigures,
  CurvePoint,
  LabelledItem,
  RehearsalCurve,
  RehearsalData,
  RehearsalOptions,
  RehearsalResult,
  TransferCurve,
} from './rehearsal/rehearsal.js';
export { screeningFigures } from './rehearsal/rehearsal-screening.js';
export type { ScreeningFigures, WatchedCategoryFigures } from './rehearsal/rehearsal-screening.js';
export { summarizeSeeds } from './rehearsal/multi-seed.js';
export type { MultiSeedSummary, Spread } from './rehearsal/multi-seed.js';

export { cohenKappa, cohenKappaFromMatrix } from './agreement/cohen-kappa.js';
export type { CohenKappa } from './agreement/cohen-kappa.js';
export { fleissKappa } from './agreement/fleiss-kappa.js';
export type { FleissKappa } from './agreement/fleiss-kappa.js';
export {
  addCoincidences,
  alphaFromCoincidences,
  alphaOfCounts,
  countValues,
  krippendorffAlpha,
} from './agreement/krippendorff-alpha.js';
export type { AlphaLevel, KrippendorffAlpha, ReliabilityTable, ValueCounts } from './agreement/krippendorff-alpha.js';
export { alphaBootstrap, sortedQuantile } from './agreement/alpha-bootstrap.js';
export type { AlphaBootstrapOptions, AlphaInterval } from './agreement/alpha-bootstrap.js';

export {
  addScore,
  emptyScoreSummary,
  ppiMean,
  ppiTotal,
  ppiTunedLambda,
  summarizeScores,
} from './screening/prediction-powered.js';
export type { PpiEstimate, PpiOptions, ScoreSummary, UnlabelledPopulation } from './screening/prediction-powered.js';
export { estimatePopulationCount, PPI_MIN_EVENTS, PPI_MIN_LABELLED } from './screening/population-count.js';
export type { CountEstimate, CountMethod, CountOptions } from './screening/population-count.js';
export { estimatePrevalence } from './screening/prevalence.js';
export type { PeriodSample, PrevalenceEstimate } from './screening/prevalence.js';
export { ESTIMATION_SHARE, inEstimationFold } from './screening/estimation-fold.js';

export {
  assertSparseMatrix,
  keepLargestPerRow,
  sparseMatrixFromDense,
  sparseMatrixToDense,
} from './vocabulary/sparse-matrix.js';
export type { SparseMatrix } from './vocabulary/sparse-matrix.js';
export { DEFAULT_CONTEXT_SMOOTHING, ppmi } from './vocabulary/ppmi.js';
export type { PpmiOptions } from './vocabulary/ppmi.js';
export { DEFAULT_VOCABULARY_SIZE, VocabularyCounter } from './vocabulary/vocabulary-counter.js';
export type { VocabularyCounterOptions, VocabularyOptions } from './vocabulary/vocabulary-counter.js';
export { createPhraseJoiner } from './vocabulary/phrase-joiner.js';
export { CooccurrenceCounter, DEFAULT_CONTEXT_WINDOW } from './vocabulary/cooccurrence-counter.js';
export type { CooccurrenceOptions, CooccurrenceTable } from './vocabulary/cooccurrence-counter.js';
export { rankBySimilarity, rowNorms } from './vocabulary/term-similarity.js';
export type { SimilarityOptions, SimilarRow } from './vocabulary/term-similarity.js';

export {
  avoidNearDuplicate,
  byPriority,
  drawKindOf,
  drawPlan,
  NEAR_DUPLICATE_CANDIDATES,
  NEAR_DUPLICATE_COSINE,
  priorityOf,
  SAMPLING_STRATEGIES,
  screenPriority,
  uniformPick,
} from './sampling/sampling-policy.js';
export type {
  DeskState,
  DrawSource,
  DrawStep,
  LaneShares,
  PolicyDraw,
  SamplingStrategy,
} from './sampling/sampling-policy.js';
