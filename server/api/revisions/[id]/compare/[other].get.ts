import { z } from 'zod'
import type { RevisionComparisonDto } from '#shared/types/procedure-api'
import { compareContents } from '#shared/utils/compare'
import { loadVisibleRevision, revisionDetail } from '../../../../services/procedures'

// GET /api/revisions/[a]/compare/[b]: the route folder is named [id] so it shares its
// parameter name with the other revision routes.
const Params = z.object({ id: z.coerce.number().int().positive(), other: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const user = await requireUser(event)
  const { id, other } = await getValidatedRouterParams(event, parseWith(Params))
  const [a, b] = await Promise.all([loadVisibleRevision(id, user), loadVisibleRevision(other, user)])
  if (a.proc.id !== b.proc.id) throw createError({ statusCode: 422, message: 'Both revisions must belong to the same procedure.' })
  const [da, db] = await Promise.all([revisionDetail(a.rev, a.proc, user), revisionDetail(b.rev, b.proc, user)])
  const strip = ({ content: _c, rendered: _r, comments: _m, attachments: _a, labels: _l, procedure: _p, can: _k, ...s }: typeof da) => s
  return { a: strip(da), b: strip(db), ...compareContents(a.rev.content, b.rev.content) } satisfies RevisionComparisonDto
})
