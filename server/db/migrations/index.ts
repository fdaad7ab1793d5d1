import type { QueryInterface } from 'sequelize'
import * as m0001 from './0001-foundation'

export interface Migration {
  name: string
  up: (p: { context: QueryInterface }) => Promise<unknown>
  down: (p: { context: QueryInterface }) => Promise<unknown>
}

/** Every migration, in order. Add new ones at the end; never edit one that has shipped. */
export const MIGRATIONS: Migration[] = [
  { name: '0001-foundation', ...m0001 },
]
