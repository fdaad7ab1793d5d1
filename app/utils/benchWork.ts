import type { CauseContent, RevisionContent, StepContent } from '#shared/types/procedure'
import type { EvidenceCauseDto, RecordDto } from '#shared/types/records'
import { evaluateReading, type ReadingVerdict } from '#shared/utils/readings'

// The bench record's model, without Vue: the technician's working copy of a record, the verdict
// of each typed reading, and the causes ranked for the bench. The store
// (app/stores/benchRecord.ts) holds one record and calls these on it.

export interface StepWork { value: string, note: string, done: boolean }
export interface UnitDetails { model: string, serial: string, jobRef: string }
export interface BenchPhoto { id: number, url: string, thumbnailUrl: string }

/** What the technician changes on an open record; everything else is the server's. */
export interface BenchWork {
  unit: UnitDetails
  steps: Record<string, StepWork>
  notes: string
  photos: BenchPhoto[]
}

export type StepReading
  = | { state: 'empty' }
    | { state: 'unreadable', error: string }
    | { state: 'judged', verdict: ReadingVerdict, pass: boolean, display: string, expected: string, raises: string[] }

/** A failing reading that raised a cause, as the "likely causes" panel names it. */
export interface RaisingReading {
  stepKey: string
  stepNumber: number
  stepTitle: string
  display: string
  verdict: ReadingVerdict
}

export interface LikelyCause {
  key: string
  /** `procedureSlug:causeKey`, the form the close form confirms. */
  id: string
  label: string
  posterior: number
  /** Evidence in words ("confirmed in 14 of 20 records"); null when ranked by the author's estimate. */
  support: string | null
  raisedBy: RaisingReading[]
}

export const emptyStepWork = (): StepWork => ({ value: '', note: '', done: false })

export function emptyWork(): BenchWork {
  return { unit: { model: '', serial: '', jobRef: '' }, steps: {}, notes: '', photos: [] }
}

/** The technician's working copy of a record: every step of the guide present, even untouched ones. */
export function workFromRecord(record: RecordDto): BenchWork {
  const steps: Record<string, StepWork> = {}
  for (const step of record.guide?.content.steps ?? []) steps[step.key] = emptyStepWork()
  for (const [key, entry] of Object.entries(record.steps ?? {})) {
    steps[key] = { value: entry.value ?? '', note: entry.note ?? '', done: entry.done === true }
  }
  return {
    unit: { model: record.unit.model, serial: record.unit.serial, jobRef: record.unit.jobRef },
    steps,
    notes: record.notes ?? '',
    photos: record.photos.map(p => ({ id: p.id, url: p.url, thumbnailUrl: p.thumbnailUrl })),
  }
}

/** A plain copy: reactive proxies cannot be structured-cloned. */
export function copyWork(work: BenchWork): BenchWork {
  return JSON.parse(JSON.stringify(work)) as BenchWork
}

/** The body of a save (`PATCH /api/records/:id`, less the version). */
export function workBody(work: BenchWork) {
  return { unit: work.unit, steps: work.steps, notes: work.notes, photoIds: work.photos.map(p => p.id) }
}

/** Judges what was typed on a step with the same evaluator the server uses, so the verdict needs no round trip. */
export function judgeStep(step: Pick<StepContent, 'measurement' | 'failPointsTo'>, value: string): StepReading {
  if (!step.measurement || value.trim() === '') return { state: 'empty' }
  const result = evaluateReading(value, step.measurement, step.failPointsTo ?? [])
  if (!result.ok) return { state: 'unreadable', error: result.error }
  return { state: 'judged', verdict: result.verdict, pass: result.pass, display: result.parsed.display, expected: result.expected, raises: result.raises }
}

/** The verdict of every step that takes a reading, as typed now. */
export function judgeSteps(content: Pick<RevisionContent, 'steps'>, steps: Record<string, StepWork>): Record<string, StepReading> {
  const out: Record<string, StepReading> = {}
  for (const step of content.steps) {
    if (step.measurement) out[step.key] = judgeStep(step, steps[step.key]?.value ?? '')
  }
  return out
}

/** How many of the guide's steps are marked done. */
export function progressOf(content: Pick<RevisionContent, 'steps'>, steps: Record<string, StepWork>): { done: number, total: number } {
  return { done: content.steps.filter(s => steps[s.key]?.done).length, total: content.steps.length }
}

/** The causes that failing readings point to so far, each with the readings that raised it, in step order. */
export function raisedByReadings(content: Pick<RevisionContent, 'steps'>, steps: Record<string, StepWork>): Record<string, RaisingReading[]> {
  const raised: Record<string, RaisingReading[]> = {}
  content.steps.forEach((step, i) => {
    const reading = judgeStep(step, steps[step.key]?.value ?? '')
    if (reading.state !== 'judged') return
    for (const cause of reading.raises) {
      (raised[cause] ??= []).push({ stepKey: step.key, stepNumber: i + 1, stepTitle: step.title, display: reading.display, verdict: reading.verdict })
    }
  })
  return raised
}

/**
 * Orders a procedure's causes for the bench: causes raised by failing readings first (a reading
 * in front of you outweighs past records), then by the evidence posterior. Without evidence for
 * any cause, the author's priors, normalised, stand in for it.
 */
export function rankLikelyCauses(opts: {
  procedureSlug: string
  causes: Array<Pick<CauseContent, 'key' | 'name' | 'prior'>>
  evidence: EvidenceCauseDto[] | null | undefined
  raised: Record<string, RaisingReading[]>
}): LikelyCause[] {
  const { procedureSlug, causes, raised } = opts
  const evidence = new Map((opts.evidence ?? []).filter(e => e.procedureSlug === procedureSlug).map(e => [e.causeKey, e]))
  const useEvidence = causes.some(c => evidence.has(c.key))
  const priorTotal = causes.reduce((sum, c) => sum + (c.prior > 0 ? c.prior : 0), 0)
  const ranked = causes.map((c, order) => {
    const e = evidence.get(c.key)
    const posterior = useEvidence ? (e?.posterior ?? 0) : (priorTotal > 0 && c.prior > 0 ? c.prior / priorTotal : 0)
    return {
      order,
      cause: {
        key: c.key,
        id: `${procedureSlug}:${c.key}`,
        label: c.name,
        posterior,
        support: useEvidence && e ? e.support : null,
        raisedBy: raised[c.key] ?? [],
      } satisfies LikelyCause,
    }
  })
  ranked.sort((a, b) => {
    const ra = a.cause.raisedBy.length > 0 ? 1 : 0
    const rb = b.cause.raisedBy.length > 0 ? 1 : 0
    return rb - ra || b.cause.posterior - a.cause.posterior || a.order - b.order
  })
  return ranked.map(r => r.cause)
}

/** One line of the conflict table: a field whose two copies differ. */
export interface WorkDifference { what: string, mine: string, theirs: string }

/** Where two copies of a record's work differ, in the guide's step order. */
export function workDifferences(mine: BenchWork, theirs: BenchWork, steps: Pick<StepContent, 'key'>[]): WorkDifference[] {
  const out: WorkDifference[] = []
  const add = (what: string, a: string, b: string) => {
    if (a !== b) out.push({ what, mine: a || '—', theirs: b || '—' })
  }
  add('Model', mine.unit.model, theirs.unit.model)
  add('Serial', mine.unit.serial, theirs.unit.serial)
  add('Job reference', mine.unit.jobRef, theirs.unit.jobRef)
  steps.forEach((s, i) => {
    const a = mine.steps[s.key] ?? emptyStepWork()
    const b = theirs.steps[s.key] ?? emptyStepWork()
    add(`Step ${i + 1} reading`, a.value, b.value)
    add(`Step ${i + 1} note`, a.note, b.note)
    add(`Step ${i + 1} done`, a.done ? 'done' : 'not done', b.done ? 'done' : 'not done')
  })
  add('Notes', mine.notes, theirs.notes)
  add('Photos', `${mine.photos.length}`, `${theirs.photos.length}`)
  return out
}
