import { Attachment, AttachmentUse, Procedure, Revision, type User } from '../../db'
import { notFound } from '../errors'
import { canSeeRevision } from '../procedures/access'

// Who may open a stored file: the file is seen wherever what it belongs to is seen, so its id is
// never enough on its own (OWASP WSTG-ATHZ-04). Its uploader always; a bench photo of a record
// and a capture's raw export, everyone signed in (the team reads every record and capture); a
// step image, whoever may see one of the revisions that show it (a draft's image stays with the
// draft's author and editors until the revision is submitted). Anyone else is told the file
// does not exist, as for a draft.

export async function canSeeAttachment(user: User, attachment: Attachment): Promise<boolean> {
  if (attachment.uploadedById === user.id) return true
  if (attachment.kind === 'capture') return true
  const uses = await AttachmentUse.findAll({ where: { attachmentId: attachment.id }, raw: true })
  if (uses.some(u => u.ownerType === 'record')) return true
  const revisionIds = uses.filter(u => u.ownerType === 'revision').map(u => u.ownerId)
  if (!revisionIds.length) return false
  const revisions = await Revision.findAll({ where: { id: revisionIds }, attributes: ['id', 'state', 'authorId', 'procedureId'] })
  const procedures = new Map((await Procedure.findAll({ where: { id: [...new Set(revisions.map(r => r.procedureId))] } })).map(p => [p.id, p]))
  return revisions.some((rev) => {
    const proc = procedures.get(rev.procedureId)
    return !!proc && canSeeRevision(user, rev, proc)
  })
}

/** The file, if this person may open it; otherwise 404, as if it did not exist. */
export async function findVisibleAttachment(id: number, user: User): Promise<Attachment> {
  const attachment = await Attachment.findByPk(id)
  if (!attachment || !(await canSeeAttachment(user, attachment))) throw notFound('file')
  return attachment
}
