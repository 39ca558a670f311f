export { AuthService, AuthError } from './auth.service.js';
export { AuthModule, AuthCoreModule } from './auth.module.js';
export { AuthGuard, readCookie } from './auth.guard.js';
export { Roles, Public, CurrentUser } from './roles.decorator.js';
export { SESSION_COOKIE, type Principal } from './principal.js';
export { hashPassword, verifyPassword, newSecret, secretHash } from './secrets.js';
