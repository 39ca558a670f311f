export { AuditService, type AuditActor, type AuditRecord } from './audit.service.js';
export { AuditModule } from './audit.module.js';
