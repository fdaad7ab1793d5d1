import { z } from 'zod'
import type { DeviceTypeDto, SymptomDto } from './procedure-api'

const name = z.string().trim().min(2, 'must be at least 2 characters').max(120, 'must be at most 120 characters')
const synonyms = z.array(z.string().trim().min(1).max(80)).max(30, 'at most 30 synonyms')
const description = z.string().trim().max(2000)

// Defaults belong to creation only: in a change, a field left out keeps its stored value (a
// default there would overwrite it, since zod applies a default to an absent optional field).
export const SymptomCreateBody = z.object({ name, synonyms: synonyms.default([]), description: description.default('') })
export const SymptomPatchBody = z.object({ name: name.optional(), synonyms: synonyms.optional(), description: description.optional() })
  .refine(b => b.name !== undefined || b.synonyms !== undefined || b.description !== undefined, { message: 'nothing to change' })
export const SymptomMergeBody = z.object({ into: z.string().trim().min(1).max(80) })
export const DeviceTypeCreateBody = z.object({ name, description: description.default('') })
export const DeviceTypePatchBody = z.object({ name: name.optional(), description: description.optional() })
  .refine(b => b.name !== undefined || b.description !== undefined, { message: 'nothing to change' })

/** POST /api/device-types and PATCH /api/device-types/[id] */
export interface DeviceTypeSavedDto { deviceType: DeviceTypeDto }

/** Creating, proposing, changing, accepting or merging a symptom. */
export interface SymptomSavedDto { symptom: SymptomDto }
