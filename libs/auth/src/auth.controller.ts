import {
  BadRequestException,
  Body,
  ConflictException,
  Controller,
  Get,
  HttpCode,
  Inject,
  NotFoundException,
  Param,
  ParseIntPipe,
  Patch,
  Post,
  Req,
  Res,
  UnauthorizedException,
} from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import type { Request, Response } from 'express';
import { APP_CONFIG, type AppConfig } from '#config';
import { ROLES, type UserEntity } from '#database';
import { AuthError, AuthService } from './auth.service.js';
import { CreateTokenDto, CreateUserDto, LoginDto, UpdateUserDto } from './auth.dto.js';
import { readCookie } from './auth.guard.js';
import { SESSION_COOKIE, type Principal } from './principal.js';
import { CurrentUser, Public, Roles } from './roles.decorator.js';

const publicUser = (u: UserEntity) => ({
  id: u.id,
  name: u.name,
  role: u.role,
  disabled: u.disabled,
  createdAt: u.createdAt,
});

function toHttp(e: unknown): never {
  if (e instanceof AuthError) {
    if (/exists already/.test(e.message)) throw new ConflictException(e.message);
    if (/^no user/.test(e.message)) throw new NotFoundException(e.message);
    throw new BadRequestException(e.message);
  }
  throw e;
}

@ApiTags('auth')
@Controller('api/auth')
export class AuthController {
  constructor(
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Signs in with name and password; sets an HttpOnly, SameSite=Strict session cookie. */
  @Public()
  @Post('login')
  @HttpCode(200)
  async login(@Body() body: LoginDto, @Res({ passthrough: true }) res: Response) {
    try {
      const { secret, principal, expiresAt } = await this.auth.login(body.name, body.password);
      res.cookie(SESSION_COOKIE, secret, {
        httpOnly: true,
        sameSite: 'strict',
        secure: this.config.cookieSecure,
        path: '/',
        expires: expiresAt,
      });
      return { user: { id: principal.id, name: principal.name, role: principal.role }, expiresAt };
    } catch (e) {
      if (e instanceof AuthError) throw new UnauthorizedException(e.message);
      throw e;
    }
  }

  @Roles(...ROLES)
  @Post('logout')
  @HttpCode(204)
  async logout(@Req() req: Request, @Res({ passthrough: true }) res: Response): Promise<void> {
    const secret = readCookie(req.headers.cookie, SESSION_COOKIE);
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
  me(@CurrentUser() user: Principal) {
    return { id: user.id, name: user.name, role: user.role, via: user.via };
  }

  /** Creates a personal API token for the signed-in user; the token is shown once. */
  @Roles(...ROLES)
  @Post('tokens')
  async token(@CurrentUser() user: Principal, @Body() body: CreateTokenDto) {
    return this.auth.createToken(user, body.label);
  }
}

@ApiTags('users')
@Controller('api/users')
export class UsersController {
  constructor(@Inject(AuthService) private readonly auth: AuthService) {}

  @Roles('admin')
  @Get()
  async list() {
    return { users: (await this.auth.listUsers()).map(publicUser) };
  }

  /** Creates a user; the response holds a first API token, shown once. */
  @Roles('admin')
  @Post()
  async create(@CurrentUser() admin: Principal, @Body() body: CreateUserDto) {
    try {
      const { user, token } = await this.auth.createUser(admin, body);
      return { ...publicUser(user), token };
    } catch (e) {
      toHttp(e);
    }
  }

  @Roles('admin')
  @Patch(':userId')
  async update(
    @CurrentUser() admin: Principal,
    @Param('userId', ParseIntPipe) id: number,
    @Body() body: UpdateUserDto,
  ) {
    try {
      return publicUser(await this.auth.updateUser(admin, id, body));
    } catch (e) {
      toHttp(e);
    }
  }
}
