import { EntitySchema } from 'typeorm';
import type { Dialect } from '../dialect.js';
import { columns } from './columns.js';

export class CategoryEntity {
  id!: number;
  deskId!: number;
  name!: string;
  /** Display order and keyboard key (1-based). */
  position!: number;
  createdAt!: Date;
}

export const categorySchema = (d: Dialect) => {
  const c = columns(d);
  return new EntitySchema<CategoryEntity>({
    name: 'CategoryEntity',
    target: CategoryEntity,
    tableName: 'categories',
    columns: {
      id: c.id(),
      deskId: c.int('desk_id'),
      name: c.varchar('name', 100),
      position: c.int('position'),
      createdAt: c.time('created_at'),
    },
  });
};
