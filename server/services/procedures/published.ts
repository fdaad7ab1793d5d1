import { LRUCache } from 'lru-cache'
import { Op, type Order, type WhereOptions } from 'sequelize'
import { roleAtLeast } from '../../../shared/types/roles'
import type { RevisionContent } from '../../../shared/types/procedure'
import type { LibraryGroup, LibrarySort, Paginated, ProcedureListItemDto, ProcedureReadDto } from '../../../shared/types/procedure-api'
import { Attachment, DeviceType, Procedure, Revision, Symptom, User, afterModelChange, contentPart, jsonArray, useDb } from '../../db'
import { DomainError } from '../errors'
import { mergedSymptomSlugs } from '../vocabulary'
import { canSeeRevision, findProcedure } from './access'
import { attachmentsOf, labelsOf, people, renderContent } from './dto'

// What a published revision shows beside the live status: its content never changes once
// published, so the shaped part (rendered text, photos, labels, author and reviewer) is kept per
// revision. The labels, captions and names it carries can change: any change to those tables
// through this instance empties the cache after commit; a change made through another instance
// shows here within VIEW_TTL_MS. The procedure row (live revision, retired or not) and the pending
// revisions are read on every request, so publishing and retiring show at once everywhere.
type PublishedView = Omit<ProcedureReadDto, 'procedure' | 'pending'>
const VIEW_TTL_MS = 5000
// Emptied after commit by any change here to attachments, vocabulary or users; entries expire after VIEW_TTL_MS.
const publishedViews = new LRUCache<number, PublishedView>({ max: 500, ttl: VIEW_TTL_MS })
let watchingViews = false
let viewGeneration = 0 // bumped by every change: a view read before a change is not kept after it

async function publishedView(revisionId: number): Promise<PublishedView | null> {
  if (!watchingViews) {
    watchingViews = true
    afterModelChange([Attachment, DeviceType, Symptom, User], () => {
      viewGeneration++
      publishedViews.clear()
    })
  }
  const hit = publishedViews.get(revisionId)
  if (hit) return hit
  const generation = viewGeneration
  const rev = await Revision.findByPk(revisionId)
  if (!rev) return null
  const [who, attachments, labels] = await Promise.all([people([rev.authorId, rev.reviewerId]), attachmentsOf(rev.content), labelsOf(rev.content)])
  const view: PublishedView = {
    revision: { id: rev.id, number: rev.number!, state: rev.state, content: rev.content, publishedAt: rev.publishedAt!.toISOString() },
    rendered: renderContent(rev.content),
    attachments,
    labels,
    author: who.get(rev.authorId)!,
    reviewer: rev.reviewerId ? who.get(rev.reviewerId) ?? null : null,
  }
  if (generation === viewGeneration) publishedViews.set(revisionId, view)
  return view
}

export async function readPublished(slug: string, user: User): Promise<ProcedureReadDto> {
  const proc = await findProcedure(slug)
  const view = proc.publishedRevisionId ? await publishedView(proc.publishedRevisionId) : null
  if (!view || (proc.status === 'retired' && !roleAtLeast(user.role, 'editor'))) {
    throw new DomainError('not_found', proc.status === 'retired' ? 'This procedure was retired.' : 'This procedure has no reviewed revision yet.')
  }
  const pendingRows = roleAtLeast(user.role, 'author')
    ? (await Revision.findAll({ where: { procedureId: proc.id, state: ['draft', 'in_review', 'changes_requested'] }, order: [['id', 'ASC']] }))
        .filter(r => canSeeRevision(user, r, proc))
    : []
  const who = await people(pendingRows.map(r => r.authorId))
  return {
    procedure: { id: proc.id, slug: proc.slug, status: proc.status },
    ...view,
    pending: pendingRows.map(r => ({ id: r.id, number: r.number, state: r.state, author: who.get(r.authorId)! })),
  }
}

type ListRow = { id: number, number: number, publishedAt: Date | string, title: string, deviceType: string, symptoms: unknown, hazards: unknown, procedure: { id: number, slug: string } }

/** How the library is ordered: newest live revision first, or by title; grouped by device type name or not. */
function libraryOrder(sort: LibrarySort, group: LibraryGroup): Order {
  const sequelize = useDb()
  const order: Order = []
  if (group === 'device') order.push([sequelize.literal('(SELECT d.name FROM device_types d WHERE d.slug = JSON_VALUE(`Revision`.`content`, \'$.deviceType\'))'), 'ASC'])
  if (sort === 'title') order.push([contentPart('JSON_VALUE', '$.title'), 'ASC'])
  order.push(['publishedAt', 'DESC'], ['id', 'DESC'])
  return order
}

/** The published, active procedures, filtered by device type and symptom, in the order asked for. */
export async function listPublished(filter: { deviceType?: string, symptom?: string, sort?: LibrarySort, group?: LibraryGroup, page: number, pageSize: number }): Promise<Paginated<ProcedureListItemDto>> {
  const sequelize = useDb()
  const where: WhereOptions[] = [{ state: 'published' }]
  if (filter.deviceType) where.push(sequelize.where(contentPart('JSON_VALUE', '$.deviceType'), filter.deviceType))
  const mergedInto = await mergedSymptomSlugs()
  const resolve = (slugs: string[]) => [...new Set(slugs.map(s => mergedInto.get(s) ?? s))]
  if (filter.symptom) {
    // A procedure written with a symptom since merged into this one is listed under it.
    const wanted = [filter.symptom, ...[...mergedInto].filter(([, into]) => into === filter.symptom).map(([from]) => from)]
    where.push({ [Op.or]: wanted.map(s => sequelize.where(sequelize.fn('JSON_CONTAINS', sequelize.col('content'), JSON.stringify(s), sequelize.literal('\'$.symptoms\'')), 1)) })
  }
  // Only the parts of the content a list shows: whole procedures (steps and all) would be read
  // and parsed for a page of 20 titles.
  const { rows: found, count } = await Revision.findAndCountAll({
    attributes: ['id', 'number', 'publishedAt', [contentPart('JSON_VALUE', '$.title'), 'title'], [contentPart('JSON_VALUE', '$.deviceType'), 'deviceType'], [contentPart('JSON_EXTRACT', '$.symptoms'), 'symptoms'], [contentPart('JSON_EXTRACT', '$.hazards'), 'hazards']],
    where: { [Op.and]: where },
    include: [{ model: Procedure, as: 'procedure', attributes: ['id', 'slug'], where: { status: 'active' }, required: true }],
    order: libraryOrder(filter.sort ?? 'live', filter.group ?? 'none'),
    limit: filter.pageSize,
    offset: (filter.page - 1) * filter.pageSize,
    raw: true,
    nest: true,
  })
  const rows = (found as unknown as ListRow[]).map(r => ({ ...r, symptoms: jsonArray<string>(r.symptoms), hazards: jsonArray<RevisionContent['hazards'][number]>(r.hazards) }))
  const slugs = new Set<string>()
  for (const r of rows) for (const s of [r.deviceType, ...resolve(r.symptoms)]) slugs.add(s)
  const [types, symptoms] = await Promise.all([
    DeviceType.findAll({ where: { slug: [...slugs] }, raw: true }),
    Symptom.findAll({ where: { slug: [...slugs] }, attributes: ['slug', 'name'], raw: true }),
  ])
  const typeName = new Map(types.map(t => [t.slug, t.name]))
  const symptomName = new Map(symptoms.map(s => [s.slug, s.name]))
  return {
    data: rows.map(r => ({
      id: r.procedure.id,
      slug: r.procedure.slug,
      title: r.title,
      deviceType: { slug: r.deviceType, name: typeName.get(r.deviceType) ?? r.deviceType },
      symptoms: resolve(r.symptoms).map(s => ({ slug: s, name: symptomName.get(s) ?? s })),
      hazards: r.hazards,
      revisionNumber: r.number,
      publishedAt: new Date(r.publishedAt).toISOString(),
    })),
    meta: { total: count, page: filter.page, pageSize: filter.pageSize, pages: Math.max(1, Math.ceil(count / filter.pageSize)) },
  }
}
