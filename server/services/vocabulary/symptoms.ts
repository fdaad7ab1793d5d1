import { createError } from 'h3'
import { Op, UniqueConstraintError, type Transaction } from 'sequelize'
import type { DeviceTypeDto, SymptomDto } from '../../shared/types/procedure-api'
import { slugify } from '../../shared/utils/slug'
import type { User } from '../db'
import { DeviceType, Symptom, inTransaction } from '../db'
import { recordAudit } from './audit'
import { notifyVocabularyChanged } from './change-log'

export function toDeviceTypeDto(d: DeviceType): DeviceTypeDto {
  return { id: d.id, slug: d.slug, name: d.name, description: d.description }
}

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

export async function listDeviceTypes(): Promise<DeviceTypeDto[]> {
  return (await DeviceType.findAll({ order: [['name', 'ASC']] })).map(toDeviceTypeDto)
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

/** A free slug for a name: the plain slug, else with -2, -3 … */
async function freeSlug(model: typeof Symptom | typeof DeviceType, name: string, transaction?: Transaction): Promise<string> {
  const base = slugify(name, 70)
  const taken = new Set((await (model as typeof Symptom).findAll({ where: { slug: { [Op.like]: `${base}%` } }, attributes: ['slug'], transaction, raw: true })).map(r => r.slug))
  if (!taken.has(base)) return base
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`
}

const duplicate = (what: string, name: string) => createError({
  statusCode: 409,
  message: `A ${what} named "${name}" already exists.`,
  data: { fields: { name: 'already exists' } },
})

async function assertNameFree(model: typeof Symptom | typeof DeviceType, name: string, exceptId?: number) {
  const clash = await (model as typeof Symptom).findOne({ where: { name, ...(exceptId ? { id: { [Op.ne]: exceptId } } : {}) } })
  if (clash) throw duplicate(model === Symptom ? 'symptom' : 'device type', name)
}

function cleanSynonyms(list: string[], name: string): string[] {
  const seen = new Set([name.toLowerCase()])
  return list.map(s => s.trim()).filter((s) => {
    const k = s.toLowerCase()
    if (!s || seen.has(k)) return false
    seen.add(k)
    return true
  })
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
  if (!symptom) throw createError({ statusCode: 404, message: 'No such symptom.' })
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
  if (!symptom) throw createError({ statusCode: 404, message: 'No such symptom.' })
  if (symptom.status !== 'proposed') throw createError({ statusCode: 409, message: `The symptom is ${symptom.status}, not proposed.` })
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
    if (!symptom) throw createError({ statusCode: 404, message: 'No such symptom.' })
    if (symptom.status !== 'proposed') throw createError({ statusCode: 409, message: `Only a proposed symptom can be merged; this one is ${symptom.status}.` })
    const target = await Symptom.findOne({ where: { slug: intoSlug }, transaction, lock: transaction.LOCK.UPDATE })
    if (!target || target.id === symptom.id || target.status !== 'accepted') {
      throw createError({ statusCode: 422, message: `"${intoSlug}" is not an accepted symptom to merge into.`, data: { fields: { into: 'must be an accepted symptom' } } })
    }
    await target.update({ synonyms: cleanSynonyms([...target.synonyms, symptom.name, ...symptom.synonyms], target.name) }, { transaction })
    await symptom.update({ status: 'merged', mergedIntoId: target.id }, { transaction })
    await recordAudit({ actorId: actor.id, action: 'symptom.merged', entityType: 'symptom', entityId: id, after: { into: target.slug } }, transaction)
    await notifyVocabularyChanged(transaction)
    return target
  })
}

export async function createDeviceType(input: { name: string, description: string }, actor: User): Promise<DeviceType> {
  await assertNameFree(DeviceType, input.name)
  try {
    return await inTransaction(async (transaction) => {
      const d = await DeviceType.create({ slug: await freeSlug(DeviceType, input.name, transaction), name: input.name, description: input.description }, { transaction })
      await recordAudit({ actorId: actor.id, action: 'device_type.created', entityType: 'device_type', entityId: d.id, after: { name: d.name, slug: d.slug } }, transaction)
      await notifyVocabularyChanged(transaction)
      return d
    })
  }
  catch (error) {
    if (error instanceof UniqueConstraintError) throw duplicate('device type', input.name)
    throw error
  }
}

export async function updateDeviceType(id: number, patch: { name?: string, description?: string }, actor: User): Promise<DeviceType> {
  const d = await DeviceType.findByPk(id)
  if (!d) throw createError({ statusCode: 404, message: 'No such device type.' })
  if (patch.name) await assertNameFree(DeviceType, patch.name, id)
  await inTransaction(async (transaction) => {
    const before = { name: d.name, description: d.description }
    await d.update(patch, { transaction })
    await recordAudit({ actorId: actor.id, action: 'device_type.updated', entityType: 'device_type', entityId: id, before, after: { name: d.name, description: d.description } }, transaction)
    await notifyVocabularyChanged(transaction)
  })
  return d
}
