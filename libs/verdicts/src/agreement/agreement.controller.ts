import { Controller, Get, Inject, Param, ParseIntPipe } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { Roles, OnDesk } from '#auth';
import { AgreementAnswer } from '../verdict.responses.js';
import { AgreementService } from './agreement.service.js';

@ApiTags('agreement')
@Controller('api')
export class AgreementController {
  constructor(@Inject(AgreementService) private readonly agreement: AgreementService) {}

  /** Agreement between reviewers on items two or more of them decided: Cohen's kappa per pair, Fleiss' kappa, Krippendorff's alpha. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/agreement')
  @ApiAnswer(AgreementAnswer)
  forDesk(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof AgreementAnswer>> {
    return this.agreement.forDesk(deskId);
  }
}
