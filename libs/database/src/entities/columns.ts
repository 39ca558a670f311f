import type { EntitySchemaColumnOptions } from 'typeorm';
import { dialectTypes, type Dialect } from '../dialect.js';

/** Column builders shared by the entity schemas, so both databases get the same logical schema. */
export function columns(dialect: Dialect) {
  const t = dialectTypes(dialect);
  return {
    id: (): EntitySchemaColumnOptions => ({ type: 'integer', primary: true, generated: 'increment' }),
    uuid: (): EntitySchemaColumnOptions => ({ type: 'varchar', length: 36, primary: true }),
    int: (name: string, nullable = false): EntitySchemaColumnOptions => ({ type: 'integer', name, nullable }),
    double: (name: string, nullable = false): EntitySchemaColumnOptions => ({
      type: 'double precision',
      name,
      nullable,
    }),
    bool: (name: string): EntitySchemaColumnOptions => ({ type: 'boolean', name }),
    varchar: (name: string, length: number, nullable = false): EntitySchemaColumnOptions => ({
      type: 'varchar',
      name,
      length,
      nullable,
    }),
    text: (name: string, nullable = false): EntitySchemaColumnOptions => ({ type: 'text', name, nullable }),
    json: (name: string, nullable = false): EntitySchemaColumnOptions => ({ type: 'simple-json', name, nullable }),
    time: (name: string, nullable = false): EntitySchemaColumnOptions => ({ type: t.timestamp, name, nullable }),
  };
}
