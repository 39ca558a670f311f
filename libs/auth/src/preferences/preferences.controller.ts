import { Body, Controller, Get, Inject, Put } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { ROLES } from '#database';
import type { Principal } from '../principal.js';
import { CurrentUser, Roles } from '../roles.decorator.js';
import { PreferencesAnswer } from './preferences.responses.js';
import { PreferencesDto } from './preferences.dto.js';
import { PreferencesService } from './preferences.service.js';

/** The signed-in account's own preferences: nobody reads or changes another account's. */
@ApiTags('auth')
@Controller('api/me')
export class PreferencesController {
  constructor(@Inject(PreferencesService) private readonly preferences: PreferencesService) {}

  @Roles(...ROLES)
  @Get('preferences')
  @ApiAnswer(PreferencesAnswer)
  async get(@CurrentUser() user: Principal): Promise<Answer<typeof PreferencesAnswer>> {
    return this.preferences.get(user);
  }

  /** Replaces the preferences as a whole. */
  @Roles(...ROLES)
  @Put('preferences')
  @ApiAnswer(PreferencesAnswer, { description: 'the preferences as stored' })
  async put(@CurrentUser() user: Principal, @Body() body: PreferencesDto): Promise<Answer<typeof PreferencesAnswer>> {
    return this.preferences.put(user, { blurText: body.blurText, breakReminderMinutes: body.breakReminderMinutes });
  }
}
