import { Op, type Transaction } from 'sequelize'
import { slugify } from '../../../shared/utils/slug'
import type { DeviceType } from '../../db'
import { Symptom } from '../../db'
import { conflict } from '../errors'

// What symptoms and device types share: free slugs, unique names, tidy synonym lists.

/** A free slug for a name: the plain slug, else with -2, -3 … */
export async function freeSlug(model: typeof Symptom | typeof DeviceType, name: string, transaction?: Transaction): Promise<string> {
  const base = slugify(name, 70)
  const taken = new Set((await (model as typeof Symptom).findAll({ where: { slug: { [Op.like]: `${base}%` } }, attributes: ['slug'], transaction, raw: true })).map(r => r.slug))
  if (!taken.has(base)) return base
  for (let i = 2; ; i++) if (!taken.has(`${base}-${i}`)) return `${base}-${i}`
}

export const duplicate = (what: string, name: string) => conflict(`A ${what} named "${name}" already exists.`, { fields: { name: 'already exists' } })

export async function assertNameFree(model: typeof Symptom | typeof DeviceType, name: string, exceptId?: number) {
  const clash = await (model as typeof Symptom).findOne({ where: { name, ...(exceptId ? { id: { [Op.ne]: exceptId } } : {}) } })
  if (clash) throw duplicate(model === Symptom ? 'symptom' : 'device type', name)
}

export function cleanSynonyms(list: string[], name: string): string[] {
  const seen = new Set([name.toLowerCase()])
  return list.map(s => s.trim()).filter((s) => {
    const k = s.toLowerCase()
    if (!s || seen.has(k)) return false
    seen.add(k)
    return true
  })
}
