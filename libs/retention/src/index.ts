export { RetentionModule, RetentionCoreModule } from './retention.module.js';
export {
  ErasureService,
  ERASURE_BATCH,
  type ErasureCounts,
  type ErasureRequest,
  type ErasureView,
} from './erasure.service.js';
export { RetentionService, type RetentionRun } from './retention.service.js';
export { RetentionClock } from './retention-clock.js';
export { askRecount } from './recount.js';
export { SubjectService, type SubjectExport } from './subject.service.js';
export { EraseItemsDto, ERASURE_SELECTOR_MAX } from './erasure.dto.js';
export {
  ErasureAnswer,
  ErasureListAnswer,
  OneErasureAnswer,
  RetentionRunAnswer,
  SubjectAnswer,
} from './retention.responses.js';
export { subjectHash, newErasureSalt } from './subject-hash.js';
