import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

/** The roles a user can hold on one desk (admin is an account role, never a desk's). */
export const MEMBER_ROLES = ['reviewer', 'supervisor', 'auditor'] as const;
export type MemberRole = (typeof MEMBER_ROLES)[number];

/** A user's role on one desk: who may see and do what there. */
export class DeskMemberEntity {
  deskId!: number;
  userId!: number;
  role!: MemberRole;
  createdAt!: Date;
  updatedAt!: Date;
}

export const deskMemberSchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<DeskMemberEntity>({
    name: 'DeskMemberEntity',
    target: DeskMemberEntity,
    tableName: 'desk_members',
    columns: {
      deskId: { ...c.int('desk_id'), primary: true },
      userId: { ...c.int('user_id'), primary: true },
      role: c.varchar('role', 20),
      createdAt: c.time('created_at'),
      updatedAt: c.time('updated_at'),
    },
  });
};
