import type { Transaction } from 'sequelize'
import { roleAtLeast } from '../../../shared/types/roles'
import { RepairRecord, type User } from '../../db'
import { notFound } from '../errors'

// Permissions: the whole team reads every record; its technician (and editors) change one in
// progress; after closing only amendments change it (technician, editors).
export function canEditRecord(user: User, r: RepairRecord) {
  return r.status === 'in_progress' && (r.technicianId === user.id || roleAtLeast(user.role, 'editor'))
}
export function canAmendRecord(user: User, r: RepairRecord) {
  return r.status === 'closed' && (r.technicianId === user.id || roleAtLeast(user.role, 'editor'))
}

/** The record; locked for update when read inside a transaction. */
export async function findRecord(id: number, transaction?: Transaction) {
  const r = await RepairRecord.findByPk(id, { transaction, lock: transaction ? transaction.LOCK.UPDATE : undefined })
  if (!r) throw notFound('repair record')
  return r
}
