import type { QueryInterface } from 'sequelize'
import * as m0001 from './0001-foundation'
import * as m0002 from './0002-procedures'
import * as m0003 from './0003-change-log'
import * as m0004 from './0004-repair-records'
import * as m0005 from './0005-captures'
import * as m0006 from './0006-cause-counts'
import * as m0007 from './0007-capture-job'
import * as m0008 from './0008-attachment-uses'
import * as m0009 from './0009-invitations-withdrawn'
import * as m0010 from './0010-diagnosis-reasoning'
import * as m0011 from './0011-rule-guards'

export interface Migration {
  name: string
  up: (p: { context: QueryInterface }) => Promise<unknown>
  down: (p: { context: QueryInterface }) => Promise<unknown>
}

/** Every migration, in order. Add new ones at the end; never edit one that has shipped. */
export const MIGRATIONS: Migration[] = [
  { name: '0001-foundation', ...m0001 },
  { name: '0002-procedures', ...m0002 },
  { name: '0003-change-log', ...m0003 },
  { name: '0004-repair-records', ...m0004 },
  { name: '0005-captures', ...m0005 },
  { name: '0006-cause-counts', ...m0006 },
  { name: '0007-capture-job', ...m0007 },
  { name: '0008-attachment-uses', ...m0008 },
  { name: '0009-invitations-withdrawn', ...m0009 },
  { name: '0010-diagnosis-reasoning', ...m0010 },
  { name: '0011-rule-guards', ...m0011 },
]
