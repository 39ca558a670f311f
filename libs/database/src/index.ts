export {
  Database,
  IN_LIST_MAX,
  inListChunks,
  type DbBool,
  type DbInt,
  type InsertColumn,
  type RowLock,
} from './database.js';
export { DatabaseModule } from './database.module.js';
export { DeskDirectory, DESK_CACHE_MS, type DeskEntry } from './desk-directory.service.js';
export { createDataSource, openDatabase, entitySchemas, MIGRATIONS } from './data-source.js';
export type { Dialect } from './dialect.js';
export { Mutex } from './mutex.js';
export { UserEntity, ROLES, ARCHIVE_ACCOUNT, type Role } from './entities/user.entity.js';
export { CredentialEntity } from './entities/credential.entity.js';
export { DeskMemberEntity, MEMBER_ROLES, type MemberRole } from './entities/desk-member.entity.js';
export { DeskMembers1766210000000 } from './migrations/1766210000000-desk-members.js';
export {
  DeskEntity,
  CALIBRATION_MODES,
  STRATEGIES,
  SCORES,
  RETENTION_DAYS_MAX,
  retentionOf,
  type RetentionSettings,
  type CalibrationMode,
  type Strategy,
  type ScoreKind,
} from './entities/desk.entity.js';
export { CategoryEntity } from './entities/category.entity.js';
export { ImportEntity, IMPORT_STATES, type ImportState, type ImportRowError } from './entities/import.entity.js';
export { ItemEntity, ITEM_STATES, ERASED_BY, type ItemState, type ErasedBy } from './entities/item.entity.js';
export { TOMBSTONE_TEXT, ERASURE_REASON_MAX } from './migrations/1766700000000-erasure.js';
export { URGENT_REASON_MAX } from './migrations/1766420000000-escalations.js';
export {
  LeaseEntity,
  DRAW_KINDS,
  VERDICT_DRAW_KINDS,
  TRIAGE_CALLS,
  type DrawKind,
  type VerdictDrawKind,
  type TriageCall,
  type ShownPrediction,
} from './entities/lease.entity.js';
export { VerdictEntity } from './entities/verdict.entity.js';
export { AuditEventEntity } from './entities/audit-event.entity.js';
export {
  ModelVersionEntity,
  MODEL_STATES,
  type ModelOrigin,
  type ModelState,
  type VerdictSetSummary,
} from './entities/model-version.entity.js';
export { dbErrorCode, isUniqueViolation } from './errors.js';
export { SETTLEMENT_REASON_MAX } from './migrations/1764800000000-agreement.js';
export { ModelReportEntity, REPORT_STATES, type ReportState } from './entities/model-report.entity.js';
export { EscalationEntity } from './entities/escalation.entity.js';
export { ErasureEntity, type ErasureAsked, type ErasureOutcome } from './entities/erasure.entity.js';
export { withMigrationLock, MIGRATION_LOCK_KEY, MIGRATION_WAIT_MESSAGE } from './migration-lock.js';
export { deskOr404 } from './desk-lookup.js';
