import { Op } from 'sequelize'
import type { StepFlagDto } from '../../../shared/types/records'
import { roleAtLeast } from '../../../shared/types/roles'
import { Procedure, Revision, StepFlag, User, inTransaction } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { forbidden, invalid, notFound } from '../errors'
import { queueMail } from '../mail/outbox'
import { canSeeRevision } from '../procedures/access'

// Step flags: anyone following a procedure can flag a step as unclear or wrong; its author and
// the editors are mailed, and they resolve the flag.

export async function flagStep(input: { revisionId: number, stepKey: string, kind: 'unclear' | 'wrong', note: string }, actor: User, appOrigin: string) {
  const rev = await Revision.findByPk(input.revisionId)
  const proc = rev ? await Procedure.findByPk(rev.procedureId) : null
  if (!rev || !proc || !canSeeRevision(actor, rev, proc)) throw notFound('revision')
  const step = rev.content.steps.find(s => s.key === input.stepKey)
  if (!step) throw invalid(`This revision has no step "${input.stepKey}".`, { stepKey: 'no such step' })
  return await inTransaction(async (transaction) => {
    const flag = await StepFlag.create({ ...input, raisedById: actor.id, resolvedById: null, resolvedAt: null }, { transaction })
    const recipients = await User.findAll({ where: { active: true, [Op.or]: [{ id: rev.authorId }, { role: ['editor', 'admin'] }], id: { [Op.ne]: actor.id } }, transaction })
    await queueMail(recipients.map(u => ({
      kind: 'step_flagged',
      to: u.email,
      subject: `Step flagged as ${input.kind}: "${step.title}" in ${rev.content.title}`,
      text: `${actor.name} flagged step "${step.title}" of "${rev.content.title}" (revision ${rev.number}) as ${input.kind}:\n\n${input.note}\n\n${appOrigin.replace(/\/$/, '')}/revisions/${rev.id}\n`,
    })), transaction)
    await recordAudit({ actorId: actor.id, action: 'step.flagged', entityType: 'revision', entityId: rev.id, after: { stepKey: input.stepKey, kind: input.kind } }, transaction)
    return flag
  })
}

export async function listFlags(revisionId: number): Promise<StepFlagDto[]> {
  const flags = await StepFlag.findAll({ where: { revisionId }, order: [['id', 'DESC']] })
  const people = new Map((await User.findAll({ where: { id: flags.map(f => f.raisedById) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  return flags.map(f => ({ id: f.id, stepKey: f.stepKey, kind: f.kind, note: f.note, raisedBy: people.get(f.raisedById) ?? null, resolved: !!f.resolvedAt, createdAt: f.createdAt.toISOString() }))
}

export async function resolveFlag(id: number, actor: User) {
  const flag = await StepFlag.findByPk(id)
  if (!flag) throw notFound('flag')
  const rev = await Revision.findByPk(flag.revisionId)
  if (!(rev?.authorId === actor.id || roleAtLeast(actor.role, 'editor'))) throw forbidden('The procedure\'s author or an editor resolves flags.')
  await flag.update({ resolvedById: actor.id, resolvedAt: new Date() })
  return flag
}
