import { Module } from '@nestjs/common';
import { APP_GUARD } from '@nestjs/core';
import { AuthController, UsersController } from './auth.controller.js';
import { AuthGuard } from './auth.guard.js';
import { AuthService } from './auth.service.js';
import { SignInLimiter } from './sign-in-limiter.js';
import { SignInService } from './sign-in.service.js';
import { MembersController } from './members/members.controller.js';
import { MembershipModule } from './members/membership.module.js';
import { PreferencesController } from './preferences/preferences.controller.js';
import { PreferencesRepository } from './preferences/preferences.repository.js';
import { PreferencesService } from './preferences/preferences.service.js';

/** Accounts, sign-in and the global guard; the HTTP app imports it. */
@Module({
  imports: [MembershipModule],
  controllers: [AuthController, UsersController, MembersController, PreferencesController],
  providers: [
    AuthService,
    PreferencesRepository,
    PreferencesService,
    SignInLimiter,
    SignInService,
    { provide: APP_GUARD, useClass: AuthGuard },
  ],
  exports: [AuthService, MembershipModule],
})
export class AuthModule {}

/** Accounts without HTTP, for the operator command line. */
@Module({ imports: [MembershipModule], providers: [AuthService], exports: [AuthService, MembershipModule] })
export class AuthCoreModule {}
