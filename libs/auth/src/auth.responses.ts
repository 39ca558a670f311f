import { isoTime, named, roleSchema, z } from '#api-docs';

export const SignedInAnswer = named(
  'SignedIn',
  z.strictObject({
    user: z.strictObject({ id: z.int(), name: z.string(), role: roleSchema }),
    expiresAt: isoTime.describe('when the session cookie expires'),
  }),
);

export const MeAnswer = named(
  'Me',
  z.strictObject({
    id: z.int(),
    name: z.string(),
    role: roleSchema,
    via: z.enum(['session', 'token']).describe('how this request was signed in'),
  }),
);

export const NewTokenAnswer = named(
  'NewToken',
  z.strictObject({
    id: z.int(),
    token: z.string().describe('cbt_…, shown only this once'),
    name: z.string().nullable(),
    expiresAt: isoTime.nullable().describe('null: never expires (admins only)'),
  }),
);

export const TokenListAnswer = named(
  'TokenList',
  z.strictObject({
    tokens: z.array(
      z.strictObject({
        id: z.int(),
        name: z.string().nullable(),
        createdAt: isoTime,
        expiresAt: isoTime.nullable(),
        lastUsedAt: isoTime.nullable(),
        expired: z.boolean(),
      }),
    ),
  }),
);

const user = {
  id: z.int(),
  name: z.string(),
  role: roleSchema,
  disabled: z.boolean(),
  createdAt: isoTime,
};
export const UserAnswer = named('User', z.strictObject(user));
export const UserListAnswer = named('UserList', z.strictObject({ users: z.array(UserAnswer) }));
export const NewUserAnswer = named(
  'NewUser',
  z.strictObject({ ...user, token: z.string().describe('a first API token (cbt_…), shown only this once') }),
);
