export { DesksModule } from './desks.module.js';
export { DesksService, validateSeedTerms, type DeskView } from './desks.service.js';
export { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
