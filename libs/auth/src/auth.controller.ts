import {
  BadRequestException,
  Body,
  ConflictException,
  Controller,
  Delete,
  ForbiddenException,
  Get,
  HttpCode,
  HttpException,
  Inject,
  NotFoundException,
  Param,
  ParseIntPipe,
  Patch,
  Post,
  Req,
  Res,
  ServiceUnavailableException,
  UnauthorizedException,
} from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, ApiNoContent, type Answer } from '#api-docs';
import type { Request, Response } from 'express';
import { APP_CONFIG, type AppConfig } from '#config';
import { ROLES, type UserEntity } from '#database';
import {
  MeAnswer,
  NewTokenAnswer,
  NewUserAnswer,
  SignedInAnswer,
  TokenListAnswer,
  UserAnswer,
  UserListAnswer,
} from './auth.responses.js';
import { AuthConflict, AuthError, AuthForbidden, AuthNotFound, AuthService } from './auth.service.js';
import { CreateTokenDto, CreateUserDto, LoginDto, UpdateUserDto } from './auth.dto.js';
import { bearerOf, readCookie } from './auth.guard.js';
import { SignInLimited, SignInUncounted } from './sign-in-limiter.js';
import { SignInService } from './sign-in.service.js';
import { SESSION_COOKIE, type Principal } from './principal.js';
import { CurrentUser, Public, Roles } from './roles.decorator.js';

const publicUser = (u: UserEntity) => ({
  id: u.id,
  name: u.name,
  role: u.role,
  disabled: u.disabled,
  createdAt: u.createdAt,
});

/** The accounts' errors as HTTP answers. */
export function toHttp(e: unknown): never {
  if (e instanceof AuthConflict) throw new ConflictException(e.message);
  if (e instanceof AuthNotFound) throw new NotFoundException(e.message);
  if (e instanceof AuthForbidden) throw new ForbiddenException(e.message);
  if (e instanceof AuthError) throw new BadRequestException(e.message);
  throw e;
}

@ApiTags('auth')
@Controller('api/auth')
export class AuthController {
  constructor(
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(SignInService) private readonly signIn: SignInService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /**
   * Signs in with name and password; sets an HttpOnly, SameSite=Strict session cookie. 429 with Retry-After when
   * this address has tried too often; 503 when the attempt cannot be counted.
   */
  @Public()
  @Post('login')
  @HttpCode(200)
  @ApiAnswer(SignedInAnswer, { description: 'signed in; the session cookie is set' })
  @ApiErrors({
    401: 'wrong name or password, or the account is disabled',
    403: 'a sign-in from another origin',
    413: 'the body is over 8 kB',
    429: 'too many attempts; Retry-After says when to try again',
    503: 'the attempt cannot be counted (Redis does not answer)',
  })
  async login(
    @Body() body: LoginDto,
    @Req() req: Request,
    @Res({ passthrough: true }) res: Response,
  ): Promise<Answer<typeof SignedInAnswer>> {
    try {
      const { secret, principal, expiresAt } = await this.signIn.signIn(body.name, body.password, req.ip ?? 'unknown');
      res.cookie(SESSION_COOKIE, secret, {
        httpOnly: true,
        sameSite: 'strict',
        secure: this.config.cookieSecure,
        path: '/',
        expires: expiresAt,
      });
      return { user: { id: principal.id, name: principal.name, role: principal.role }, expiresAt };
    } catch (e) {
      if (e instanceof SignInLimited) {
        res.setHeader('Retry-After', String(e.retryAfterSeconds));
        throw new HttpException({ statusCode: 429, message: e.message, retryAfter: e.retryAfterSeconds }, 429);
      }
      if (e instanceof SignInUncounted) throw new ServiceUnavailableException(e.message);
      if (e instanceof AuthError) throw new UnauthorizedException(e.message);
      throw e;
    }
  }

  /** Ends the session, or revokes the bearer token the request came with. */
  @Roles(...ROLES)
  @Post('logout')
  @HttpCode(204)
  @ApiNoContent('signed out: the session ends, or the bearer token is revoked')
  async logout(@Req() req: Request, @Res({ passthrough: true }) res: Response): Promise<void> {
    const secret = bearerOf(req.headers.authorization) ?? readCookie(req.headers.cookie, SESSION_COOKIE);
    if (secret) await this.auth.logout(secret);
    res.clearCookie(SESSION_COOKIE, {
      httpOnly: true,
      sameSite: 'strict',
      secure: this.config.cookieSecure,
      path: '/',
    });
  }

  @Roles(...ROLES)
  @Get('me')
  @ApiAnswer(MeAnswer)
  me(@CurrentUser() user: Principal): Answer<typeof MeAnswer> {
    return { id: user.id, name: user.name, role: user.role, via: user.via };
  }

  /**
   * Creates a personal API token for the signed-in user; the token is shown once. It expires after `days`
   * (TOKEN_DAYS by default); `never: true` is for admins only.
   */
  @Roles(...ROLES)
  @Post('tokens')
  @ApiAnswer(NewTokenAnswer, { status: 201, description: 'the new token, shown only this once' })
  async token(@CurrentUser() user: Principal, @Body() body: CreateTokenDto): Promise<Answer<typeof NewTokenAnswer>> {
    try {
      return await this.auth.createToken(user, { name: body.name, days: body.days, never: body.never });
    } catch (e) {
      toHttp(e);
    }
  }

  /** The signed-in user's tokens that are not revoked: name, creation, expiry, last use. */
  @Roles(...ROLES)
  @Get('tokens')
  @ApiAnswer(TokenListAnswer)
  async tokens(@CurrentUser() user: Principal): Promise<Answer<typeof TokenListAnswer>> {
    return { tokens: await this.auth.listTokens(user) };
  }

  /** Revokes one of the signed-in user's tokens. */
  @Roles(...ROLES)
  @Delete('tokens/:tokenId')
  @HttpCode(204)
  @ApiNoContent('the token is revoked')
  async revoke(@CurrentUser() user: Principal, @Param('tokenId', ParseIntPipe) id: number): Promise<void> {
    try {
      await this.auth.revokeToken(user, id);
    } catch (e) {
      toHttp(e);
    }
  }
}

@ApiTags('users')
@Controller('api/users')
export class UsersController {
  constructor(@Inject(AuthService) private readonly auth: AuthService) {}

  @Roles('admin')
  @Get()
  @ApiAnswer(UserListAnswer)
  async list(): Promise<Answer<typeof UserListAnswer>> {
    return { users: (await this.auth.listUsers()).map(publicUser) };
  }

  /** Creates a user; the response holds a first API token, shown once. */
  @Roles('admin')
  @Post()
  @ApiAnswer(NewUserAnswer, { status: 201, description: 'the new account and its first token' })
  @ApiErrors({ 409: 'an account of that name exists already' })
  async create(@CurrentUser() admin: Principal, @Body() body: CreateUserDto): Promise<Answer<typeof NewUserAnswer>> {
    try {
      const { user, token } = await this.auth.createUser(admin, body);
      return { ...publicUser(user), token };
    } catch (e) {
      toHttp(e);
    }
  }

  @Roles('admin')
  @Patch(':userId')
  @ApiAnswer(UserAnswer)
  async update(
    @CurrentUser() admin: Principal,
    @Param('userId', ParseIntPipe) id: number,
    @Body() body: UpdateUserDto,
  ): Promise<Answer<typeof UserAnswer>> {
    try {
      return publicUser(await this.auth.updateUser(admin, id, body));
    } catch (e) {
      toHttp(e);
    }
  }
}
