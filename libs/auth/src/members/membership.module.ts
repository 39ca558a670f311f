import { Module } from '@nestjs/common';
import { MembershipService } from './membership.service.js';

/** Desk memberships without HTTP: the guard, the desks (a creator becomes supervisor) and the demo seeding use it. */
@Module({ providers: [MembershipService], exports: [MembershipService] })
export class MembershipModule {}
