import { z } from 'zod'
import type { StepVerdict } from './verdicts'
import type { LearnedStats } from '../utils/diagnosis/stats'

export const OUTCOMES = ['repaired', 'not_economical', 'escalated', 'no_fault_found'] as const
export type Outcome = (typeof OUTCOMES)[number]
export const OUTCOME_LABELS: Record<Outcome, string> = {
  repaired: 'Repaired',
  not_economical: 'Not worth repairing',
  escalated: 'Passed on',
  no_fault_found: 'No fault found',
}
export const RECORD_STATUSES = ['in_progress', 'closed'] as const
export type RecordStatus = (typeof RECORD_STATUSES)[number]

const slug = z.string().trim().min(1).max(80)
const money = z.number().finite().min(0).max(1_000_000)

export const PartUsed = z.object({
  name: z.string().trim().min(1).max(160),
  partNumber: z.string().trim().max(80).optional(),
  cost: money.default(0),
})

/** One typed reading as the technician entered it; the server re-evaluates it. */
export const StepEntry = z.object({
  value: z.string().max(60).default(''),
  note: z.string().max(4000).default(''),
  done: z.boolean().default(false),
})

/** A save names only the parts of a step it changes; the others keep their stored values. */
export const StepPatch = z.object({
  value: z.string().max(60),
  note: z.string().max(4000),
  done: z.boolean(),
}).partial()

export const RecordCreateBody = z.object({
  procedureSlug: z.string().trim().min(1).max(100).optional(),
  deviceType: slug.optional(),
  symptoms: z.array(slug).max(20).default([]),
  unit: z.object({
    model: z.string().trim().max(120).default(''),
    serial: z.string().trim().max(120).default(''),
    jobRef: z.string().trim().max(80).default(''),
  }).default({ model: '', serial: '', jobRef: '' }),
}).refine(b => b.procedureSlug || (b.deviceType && b.symptoms.length), { message: 'start from a procedure, or give a device type and at least one symptom', path: ['procedureSlug'] })

/**
 * The close form as the technician fills it in, saved as they go (`closeDraft` of
 * `PATCH /api/records/[id]`) so a reload keeps it. Loose: closing checks it in full.
 */
export const CloseDraft = z.object({
  /** `procedureSlug:causeKey`, as the close form confirms it. */
  confirmedCause: z.string().trim().max(160).nullable().default(null),
  outcome: z.enum(OUTCOMES).nullable().default(null),
  parts: z.array(PartUsed.extend({ name: z.string().trim().max(160) })).max(40).default([]),
  minutes: z.number().int().min(0).max(10_000).nullable().default(null),
  replacementCost: money.nullable().default(null),
})
export type CloseDraft = z.infer<typeof CloseDraft>

export const RecordPatchBody = z.object({
  version: z.number().int().positive(),
  unit: z.object({ model: z.string().trim().max(120), serial: z.string().trim().max(120), jobRef: z.string().trim().max(80) }).partial().optional(),
  symptoms: z.array(slug).max(20).optional(),
  steps: z.record(z.string().max(40), StepPatch).optional(),
  notes: z.string().max(8000).optional(),
  photoIds: z.array(z.number().int().positive()).max(24).optional(),
  /** The close form so far; null clears it. */
  closeDraft: CloseDraft.nullable().optional(),
})

export const RecordCloseBody = z.object({
  /** `procedureSlug:causeKey` of the confirmed cause, or null with outcome no_fault_found. */
  confirmedCause: z.string().trim().max(160).nullable(),
  outcome: z.enum(OUTCOMES),
  parts: z.array(PartUsed).max(40).default([]),
  minutes: z.number().int().min(0).max(10_000),
  replacementCost: money.nullable().default(null),
  photoIds: z.array(z.number().int().positive()).max(24).default([]),
  notes: z.string().max(8000).optional(),
}).superRefine((b, ctx) => {
  if (b.outcome === 'no_fault_found' && b.confirmedCause) ctx.addIssue({ code: 'custom', path: ['confirmedCause'], message: 'no cause can be confirmed when no fault was found' })
  if (b.outcome === 'repaired' && !b.confirmedCause) ctx.addIssue({ code: 'custom', path: ['confirmedCause'], message: 'a repaired unit needs the cause that was confirmed' })
})

export const AmendmentBody = z.object({
  reason: z.string().trim().min(3, 'say why (at least 3 characters)').max(1000),
  changes: z.object({
    confirmedCause: z.string().trim().max(160).nullable().optional(),
    outcome: z.enum(OUTCOMES).optional(),
    parts: z.array(PartUsed).max(40).optional(),
    minutes: z.number().int().min(0).max(10_000).optional(),
    replacementCost: money.nullable().optional(),
    comeback: z.boolean().optional(),
    notes: z.string().max(8000).optional(),
    photoIds: z.array(z.number().int().positive()).max(24).optional(),
  }).refine(c => Object.keys(c).length > 0, { message: 'nothing to amend' }),
})

export const StepFlagBody = z.object({
  revisionId: z.number().int().positive(),
  stepKey: z.string().trim().min(1).max(40),
  kind: z.enum(['unclear', 'wrong']),
  note: z.string().trim().min(3, 'say what is unclear or wrong (at least 3 characters)').max(2000),
})

export const RecordListQuery = z.object({
  /** Words to find in the unit's model, serial or job reference. */
  q: z.string().trim().max(120).optional(),
  deviceType: slug.optional(),
  symptom: slug.optional(),
  cause: z.string().trim().max(160).optional(),
  outcome: z.enum(OUTCOMES).optional(),
  status: z.enum(RECORD_STATUSES).optional(),
  technician: z.coerce.number().int().positive().optional(),
  procedure: z.string().trim().max(100).optional(),
  from: z.iso.date().optional(),
  to: z.iso.date().optional(),
  sort: z.enum(['closedAt', '-closedAt', 'startedAt', '-startedAt', 'minutes', '-minutes']).default('-startedAt'),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
})
export type RecordListQuery = z.infer<typeof RecordListQuery>

export interface ReadingResultDto {
  value: string
  /** Server evaluation of `value` against the step's spec (null when empty, unreadable, questioned or no spec). */
  verdict: 'in_range' | 'low' | 'high' | 'open' | null
  pass: boolean | null
  display: string | null
  error: string | null
  /** The causes the verdict points to (its own entry of the step's verdict map). */
  raises: string[]
  /** A reading that fails only through a likely slip is asked about instead: `did you mean 580 mV?`. */
  question: string | null
  /** The reading as it would fit, e.g. `580 mV`. */
  suggestion: string | null
}

/** One step of a record: what the technician typed, and what the server made of it. */
export interface RecordStepDto {
  value: string
  note: string
  /** True once a readable reading is stored; a step without a reading may be marked done by hand. */
  done: boolean
  /** The step's verdict: in range, low, high or open for a measured step, pass or fail for a check. */
  verdict: StepVerdict | null
  /** When the reading that gave the verdict was stored (ISO 8601), for the minutes per step. */
  readAt: string | null
  result: ReadingResultDto
}

/**
 * What the browser needs to reason about a record exactly as the server does: the priors of
 * the guide's causes from today's evidence ranking (device type and symptoms), the share kept for
 * a cause not listed, and the counts learned from closed records of the procedure. Feed them to
 * `causeProbabilities`, `orderSteps` and `followFlow` with the record's verdicts.
 */
export interface RecordReasoningDto {
  /** causeKey → prior weight (normalised over the guide's causes). */
  priors: Record<string, number>
  unlistedPrior: number
  stats: LearnedStats
}

export interface RecordDto {
  id: number
  status: RecordStatus
  procedure: { id: number, slug: string, title: string } | null
  revision: { id: number, number: number } | null
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  unit: { model: string, serial: string, jobRef: string }
  technician: { id: number, name: string }
  steps: Record<string, RecordStepDto>
  notes: string
  /** Causes raised by failing readings so far, with how many readings point at each. */
  raised: Array<{ cause: string, label: string, readings: number }>
  confirmedCause: { id: string, label: string } | null
  outcome: Outcome | null
  parts: Array<{ name: string, partNumber?: string, cost: number }>
  partsCost: number
  minutes: number | null
  replacementCost: number | null
  photos: Array<{ id: number, url: string, thumbnailUrl: string }>
  comeback: boolean
  version: number
  startedAt: string
  closedAt: string | null
  amendments: Array<{ id: number, author: { id: number, name: string }, reason: string, changes: Record<string, { before: unknown, after: unknown }>, createdAt: string }>
  /** Causes the technician can confirm: the pinned revision's, or those of the published procedures for the device type and symptoms. */
  candidates: Array<{ id: string, label: string, procedureSlug: string }>
  /** Steps to walk (from the pinned revision; empty for a record started from symptoms alone). */
  guide: { content: import('./procedure').RevisionContent, rendered: import('./procedure-api').RenderedContent, attachments: Record<string, import('./procedure-api').AttachmentDto> } | null
  can: { edit: boolean, close: boolean, amend: boolean }
  /** The close form saved as it is filled in; null when nothing is saved or once closed. */
  closeDraft: CloseDraft | null
  /** The inputs of live reasoning for the guide procedure; null for a record without a guide. */
  reasoning: RecordReasoningDto | null
}

/**
 * GET /api/records/[id]/diagnosis: where the diagnosis stands. `causes` and `unlisted` sum to 1.
 * A procedure that is not a flow suggests every untested step by the p/c rule; a flow suggests
 * only the step it leads to now, and nothing once it has concluded.
 */
export interface DiagnosisDto {
  /** The guide's causes, most probable first; `id` is `procedureSlug:causeKey`, as the close form confirms it. */
  causes: Array<{ id: string, label: string, probability: number }>
  /** P(the cause is none of those listed). */
  unlisted: number
  /** Untested steps, the best first by findsFault / minutes (in a flow, the step it leads to now, if any). */
  next: Array<{ stepKey: string, title: string, minutes: number, findsFault: number, minutesFrom: 'records' | 'author' | 'default' }>
  /** The step keys the flow took, in order (empty for a procedure that is not a flow). */
  path: string[]
  /** The cause the flow concluded, or `{ id: 'escalate', label: 'Escalate' }`; null while it goes on. */
  concluded: { id: string, label: string } | null
  /** Said when the flow's conclusion disagrees strongly with the probabilities. */
  warning: string | null
  isFlow: boolean
}

export interface RecordListItemDto {
  id: number
  status: RecordStatus
  procedure: { slug: string, title: string } | null
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  unit: { model: string, serial: string, jobRef: string }
  technician: { id: number, name: string }
  confirmedCause: { id: string, label: string } | null
  outcome: Outcome | null
  minutes: number | null
  partsCost: number
  replacementCost: number | null
  comeback: boolean
  startedAt: string
  closedAt: string | null
}

export interface DashboardDto {
  scope: 'team' | 'mine'
  range: { from: string, to: string }
  weekly: Array<{ week: string, records: number }>
  topSymptoms: Array<{ slug: string, name: string, count: number }>
  causesByDeviceType: Array<{ deviceType: string, deviceTypeName: string, cause: string, label: string, count: number }>
  outcomes: Array<{ outcome: Outcome, count: number }>
  repairRate: number | null
  medianMinutesByProcedure: Array<{ slug: string, title: string, median: number, records: number }>
  comebacks: { count: number, rate: number | null }
  costs: { repairTotal: number, replacementTotal: number, comparedRecords: number }
  keptOutOfWaste: number
  /**
   * Per procedure, the steps whose verdict named the cause finally confirmed: `decided` of the
   * `of` closed records (with a listed cause confirmed) that read the step. All the team's
   * records of the procedure, whatever the range: this is about the procedure, not the period.
   */
  decidingSteps: Array<{ procedureSlug: string, procedureTitle: string, steps: Array<{ stepKey: string, title: string, decided: number, of: number }> }>
  /**
   * Per flow (a live procedure that branches), every branch in step and verdict order: how many
   * closed records took it and, for a branch that concludes, how many confirmed its conclusion
   * (`confirmed` is null for a branch that leads to a step). All the team's records, as above.
   */
  flowBranches: Array<{
    procedureSlug: string
    procedureTitle: string
    branches: Array<{ stepKey: string, stepTitle: string, verdict: StepVerdict, taken: number, concludes: { id: string, label: string } | null, confirmed: number | null }>
  }>
}

export interface EvidenceCauseDto {
  id: string
  procedureSlug: string
  causeKey: string
  label: string
  posterior: number
  confirmed: number
  of: number
  support: string
}

/** GET /api/evidence */
export interface EvidenceDto { data: EvidenceCauseDto[], totalRecords: number }

/** A record's routes (read, start, save, close, amend) answer the whole record. */
export interface RecordReadDto { record: RecordDto }

export interface StepFlagDto {
  id: number
  stepKey: string
  kind: 'unclear' | 'wrong'
  note: string
  raisedBy: { id: number, name: string } | null
  resolved: boolean
  createdAt: string
}

/** POST /api/step-flags */
export interface StepFlagRaisedDto { flag: Pick<StepFlagDto, 'id' | 'stepKey' | 'kind'> }

/** POST /api/step-flags/[id]/resolve */
export interface StepFlagResolvedDto { flag: { id: number, resolved: true } }
