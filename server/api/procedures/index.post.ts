import { ProcedureCreateBody } from '#shared/types/procedure'
import type { ProcedureCreatedDto } from '#shared/types/procedure-api'
import { createProcedure } from '../../services/procedures/revisions'

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'author')
  const body = await readValidatedBody(event, parseWith(ProcedureCreateBody))
  const { proc, rev } = await createProcedure(body.content, body.changeNote, actor)
  setResponseStatus(event, 201)
  return { procedure: { id: proc.id, slug: proc.slug }, revision: { id: rev.id, version: rev.version } } satisfies ProcedureCreatedDto
})
