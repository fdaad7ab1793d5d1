import type { User } from '../../db'
import { Procedure, Revision, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { conflict, forbidden, invalid } from '../errors'
import { canEditRecord, findRecord } from './access'

async function findLiveProcedure(slug: string) {
  const procedure = await Procedure.findOne({ where: { slug, status: 'active' } })
  const revision = procedure?.publishedRevisionId ? await Revision.findByPk(procedure.publishedRevisionId) : null
  if (!procedure || !revision) throw invalid(`"${slug}" is not a live procedure.`, { procedure: 'not a live procedure' })
  return { procedure, revision }
}

/**
 * A record started from device type and symptoms takes a live procedure of that device type: its
 * published revision is pinned as if the record had been started from it, so the record then
 * walks its steps. A record that already follows a procedure keeps it.
 */
export async function chooseProcedure(id: number, slug: string, actor: User) {
  const { procedure, revision } = await findLiveProcedure(slug)
  return await inTransaction(async (transaction) => {
    const r = await findRecord(id, transaction)
    if (r.status !== 'in_progress') throw conflict('This record is closed; its procedure cannot change.', { status: r.status })
    if (!canEditRecord(actor, r)) throw forbidden('Only the record\'s technician or an editor can choose its procedure.')
    if (r.procedureId !== null) throw conflict('This record already follows a procedure.', { procedureId: r.procedureId })
    if (revision.content.deviceType !== r.deviceType) {
      throw invalid(`"${slug}" is written for another device type than this record's.`, { procedure: 'written for another device type' })
    }
    await r.update({ procedureId: procedure.id, revisionId: revision.id, version: r.version + 1 }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'record.procedure_chosen', entityType: 'record', entityId: r.id, after: { procedureId: procedure.id, revisionId: revision.id } }, transaction)
    return r
  })
}
