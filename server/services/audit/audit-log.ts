import type { Transaction } from 'sequelize'
import { AuditEvent } from '../../db/models'

export interface AuditEntry {
  actorId: number | null
  action: string
  entityType: string
  entityId?: string | number | null
  before?: Record<string, unknown> | null
  after?: Record<string, unknown> | null
}

/** Appends one audit event; pass the transaction of the change so both commit or neither does. */
export async function recordAudit(entry: AuditEntry, transaction?: Transaction): Promise<void> {
  await AuditEvent.create({
    actorId: entry.actorId,
    action: entry.action,
    entityType: entry.entityType,
    entityId: entry.entityId == null ? null : String(entry.entityId),
    before: entry.before ?? null,
    after: entry.after ?? null,
  }, { transaction })
}
