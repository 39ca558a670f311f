export { ModelsModule, ModelsCoreModule, ModelsWorkModule } from './models.module.js';
export { DeskFeaturesService } from './desk-features.service.js';
export { ModelStore, type LoadedModel } from './model-store.service.js';
export { PredictionsService, type CalibrationStatus } from './predictions.service.js';
export { RetrainScheduler, FIRST_MODEL_MIN_PER_CATEGORY } from './retrain-scheduler.service.js';
export { TrainingService, PAUSE_HOOK, DEFAULT_CHUNK_SIZE, qualityFigures, type PauseHook } from './training.service.js';
export { ScoringService } from './scoring.service.js';
export { PublishService } from './publish.service.js';
export { priorityOf } from './priority.js';
