import { QueryTypes, UniqueConstraintError } from 'sequelize'
import type { CommonSymptomDto, SymptomDto } from '../../../shared/types/procedure-api'
import type { User } from '../../db'
import { Symptom, inTransaction, useDb } from '../../db'
import { recordAudit } from '../audit/audit-log'
import { notifyVocabularyChanged } from '../change-log/notify'
import { conflict, invalid, notFound } from '../errors'
import { assertNameFree, cleanSynonyms, duplicate, freeSlug } from './names'

export function toSymptomDto(s: Symptom, slugById?: Map<number, string>): SymptomDto {
  return {
    id: s.id,
    slug: s.slug,
    name: s.name,
    description: s.description,
    synonyms: s.synonyms,
    status: s.status,
    mergedInto: s.mergedIntoId ? slugById?.get(s.mergedIntoId) ?? null : null,
  }
}

export async function listSymptoms(): Promise<SymptomDto[]> {
  const all = await Symptom.findAll({ order: [['name', 'ASC']] })
  const slugById = new Map(all.map(s => [s.id, s.slug]))
  return all.map(s => toSymptomDto(s, slugById))
}

/**
 * Merged symptoms, old slug → the accepted slug it now means. Revisions keep the slugs they
 * were written with, so every listing reads them through this map.
 */
export async function mergedSymptomSlugs(): Promise<Map<string, string>> {
  const merged = await Symptom.findAll({ where: { status: 'merged' }, attributes: ['slug', 'mergedIntoId'], raw: true })
  if (!merged.length) return new Map()
  const targets = await Symptom.findAll({ where: { id: merged.map(m => m.mergedIntoId!).filter(Boolean) }, attributes: ['id', 'slug'], raw: true })
  const slugById = new Map(targets.map(t => [t.id, t.slug]))
  return new Map(merged.map(m => [m.slug, slugById.get(m.mergedIntoId!) ?? m.slug]))
}

/** The team's most common accepted symptoms by repair records (the search page's empty state). */
export async function commonSymptoms(): Promise<CommonSymptomDto[]> {
  const rows = await useDb().query<{ slug: string, name: string, n: number }>(
    `SELECT s.slug AS slug, s.name AS name, COUNT(rs.record_id) AS n
     FROM symptoms s LEFT JOIN record_symptoms rs ON rs.symptom = s.slug
     WHERE s.status = 'accepted' GROUP BY s.id ORDER BY n DESC, s.name ASC LIMIT 8`,
    { type: QueryTypes.SELECT },
  )
  return rows.map(r => ({ slug: r.slug, name: r.name, records: Number(r.n) }))
}

export async function createSymptom(input: { name: string, synonyms: string[], description: string }, actor: User, status: 'accepted' | 'proposed'): Promise<Symptom> {
  await assertNameFree(Symptom, input.name)
  try {
    return await inTransaction(async (transaction) => {
      const symptom = await Symptom.create({
        slug: await freeSlug(Symptom, input.name, transaction),
        name: input.name,
        description: input.description,
        synonyms: cleanSynonyms(input.synonyms, input.name),
        status,
        mergedIntoId: null,
        proposedById: status === 'proposed' ? actor.id : null,
      }, { transaction })
      await recordAudit({ actorId: actor.id, action: status === 'proposed' ? 'symptom.proposed' : 'symptom.created', entityType: 'symptom', entityId: symptom.id, after: { name: symptom.name, slug: symptom.slug } }, transaction)
      await notifyVocabularyChanged(transaction)
      return symptom
    })
  }
  catch (error) {
    if (error instanceof UniqueConstraintError) throw duplicate('symptom', input.name)
    throw error
  }
}

export async function updateSymptom(id: number, patch: { name?: string, synonyms?: string[], description?: string }, actor: User): Promise<Symptom> {
  const symptom = await Symptom.findByPk(id)
  if (!symptom) throw notFound('symptom')
  if (patch.name) await assertNameFree(Symptom, patch.name, id)
  const before = { name: symptom.name, synonyms: symptom.synonyms, description: symptom.description }
  await inTransaction(async (transaction) => {
    await symptom.update({
      ...patch,
      synonyms: patch.synonyms ? cleanSynonyms(patch.synonyms, patch.name ?? symptom.name) : symptom.synonyms,
    }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'symptom.updated', entityType: 'symptom', entityId: id, before, after: { name: symptom.name, synonyms: symptom.synonyms, description: symptom.description } }, transaction)
    await notifyVocabularyChanged(transaction)
  })
  return symptom
}

export async function acceptSymptom(id: number, actor: User): Promise<Symptom> {
  const symptom = await Symptom.findByPk(id)
  if (!symptom) throw notFound('symptom')
  if (symptom.status !== 'proposed') throw conflict(`The symptom is ${symptom.status}, not proposed.`)
  await inTransaction(async (transaction) => {
    await symptom.update({ status: 'accepted' }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'symptom.accepted', entityType: 'symptom', entityId: id }, transaction)
    await notifyVocabularyChanged(transaction)
  })
  return symptom
}

/**
 * Merges a proposed symptom into an accepted one: the proposed name becomes a synonym of the
 * target and the old slug keeps resolving to it (revisions are never rewritten).
 */
export async function mergeSymptom(id: number, intoSlug: string, actor: User): Promise<Symptom> {
  return await inTransaction(async (transaction) => {
    const symptom = await Symptom.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE })
    if (!symptom) throw notFound('symptom')
    if (symptom.status !== 'proposed') throw conflict(`Only a proposed symptom can be merged; this one is ${symptom.status}.`)
    const target = await Symptom.findOne({ where: { slug: intoSlug }, transaction, lock: transaction.LOCK.UPDATE })
    if (!target || target.id === symptom.id || target.status !== 'accepted') {
      throw invalid(`"${intoSlug}" is not an accepted symptom to merge into.`, { into: 'must be an accepted symptom' })
    }
    await target.update({ synonyms: cleanSynonyms([...target.synonyms, symptom.name, ...symptom.synonyms], target.name) }, { transaction })
    await symptom.update({ status: 'merged', mergedIntoId: target.id }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'symptom.merged', entityType: 'symptom', entityId: id, after: { into: target.slug } }, transaction)
    await notifyVocabularyChanged(transaction)
    return target
  })
}
