export { DesksModule } from './desks.module.js';
export { DesksService, validateSeedTerms, validateRetention, type DeskView } from './desks.service.js';
export { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
