export { AuthService, AuthError, AuthConflict, AuthForbidden, AuthNotFound } from './auth.service.js';
export { passwordProblem, PASSWORD_MIN } from './passwords/password-policy.js';
export { AuthModule, AuthCoreModule } from './auth.module.js';
export { AuthGuard, bearerOf, readCookie } from './auth.guard.js';
export { crossSiteRefusal } from './same-origin.js';
export { Roles, Public, CurrentUser, PUBLIC_KEY } from './roles.decorator.js';
export { SESSION_COOKIE, type Principal } from './principal.js';
export { hashPassword, verifyPassword, newSecret, secretHash } from './secrets.js';
export { MembershipService, type MemberView } from './members/membership.service.js';
export { MembershipModule } from './members/membership.module.js';
export {
  OnDesk,
  CurrentDesk,
  DESK_PARAMS,
  DESK_SCOPE_KEY,
  type DeskAccess,
  type DeskScope,
  type DeskScopeKind,
} from './members/desk-scope.decorator.js';
