import type { Transaction } from 'sequelize'
import { ChangeLogEntry } from '../../db/models/change-log-entry'

/** Called inside the transaction of a publish, supersede or retire. */
export async function notifyProcedureChanged(procedureId: number, transaction?: Transaction): Promise<void> {
  await ChangeLogEntry.create({ kind: 'procedure', procedureId }, { transaction })
}

/** Called inside the transaction of any symptom or device-type change. */
export async function notifyVocabularyChanged(transaction?: Transaction): Promise<void> {
  await ChangeLogEntry.create({ kind: 'vocabulary', procedureId: null }, { transaction })
}

/** Called inside the transaction that closes or amends a repair record (the evidence counts move). */
export async function notifyEvidenceChanged(transaction?: Transaction): Promise<void> {
  await ChangeLogEntry.create({ kind: 'evidence', procedureId: null }, { transaction })
}
