import { Module } from '@nestjs/common';
import { MembershipRepository } from './membership.repository.js';
import { MembershipService } from './membership.service.js';

/** Desk memberships without HTTP: the guard, the desks (a creator becomes supervisor) and the demo seeding use it. */
@Module({ providers: [MembershipRepository, MembershipService], exports: [MembershipService] })
export class MembershipModule {}
