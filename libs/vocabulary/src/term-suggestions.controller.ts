import {
  BadRequestException,
  Body,
  Controller,
  Get,
  HttpCode,
  Inject,
  Param,
  ParseIntPipe,
  Post,
  Query,
} from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { TermDecisionDto } from './term-suggestion.dto.js';
import { TermDecisionAnswer, TermSuggestionsAnswer } from './term-suggestions.responses.js';
import { TermSuggestionsService } from './term-suggestions.service.js';

const DEFAULT_LIMIT = 30;
const MAX_LIMIT = 100;

@ApiTags('desks')
@Controller('api/desks/:deskId/term-suggestions')
export class TermSuggestionsController {
  constructor(@Inject(TermSuggestionsService) private readonly suggestions: TermSuggestionsService) {}

  /** Words to add to a category's seed terms: similar in use to its terms, and leaned towards it by the model. */
  @Roles('supervisor')
  @OnDesk()
  @Get()
  @ApiAnswer(TermSuggestionsAnswer)
  @ApiQuery({ name: 'category', required: true, type: String, description: 'a category name of the desk' })
  @ApiQuery({
    name: 'limit',
    required: false,
    type: Number,
    description: `suggestions per list, 1–${MAX_LIMIT} (default ${DEFAULT_LIMIT})`,
  })
  list(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('category') category: string,
    @Query('limit') limit?: string,
  ): Promise<Answer<typeof TermSuggestionsAnswer>> {
    if (typeof category !== 'string' || category.length === 0)
      throw new BadRequestException('category: required, a category name of the desk');
    if (limit !== undefined && (!/^\d+$/.test(limit) || Number(limit) < 1 || Number(limit) > MAX_LIMIT))
      throw new BadRequestException(`limit: expected an integer 1–${MAX_LIMIT}`);
    return this.suggestions.suggestions(deskId, category, limit === undefined ? DEFAULT_LIMIT : Number(limit));
  }

  /** Adds the term to the category's seed terms (audited like any settings change). */
  @Roles('supervisor')
  @OnDesk()
  @Post('accept')
  @HttpCode(200)
  @ApiAnswer(TermDecisionAnswer, { status: 200, description: 'the term is a seed term of the category' })
  accept(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: TermDecisionDto,
  ): Promise<Answer<typeof TermDecisionAnswer>> {
    return this.suggestions.accept(user, deskId, body.category, body.term);
  }

  /** Never suggests the term for the category again (audited). */
  @Roles('supervisor')
  @OnDesk()
  @Post('dismiss')
  @HttpCode(200)
  @ApiAnswer(TermDecisionAnswer, { status: 200, description: 'the term is no longer suggested for the category' })
  dismiss(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: TermDecisionDto,
  ): Promise<Answer<typeof TermDecisionAnswer>> {
    return this.suggestions.dismiss(user, deskId, body.category, body.term);
  }
}
