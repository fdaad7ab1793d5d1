import type { RevisionContent, StepContent } from '#shared/types/procedure'
import type { CloseDraft, Outcome, RecordDto } from '#shared/types/records'
import { verdictCauses } from '#shared/types/verdicts'
import type { StepVerdict } from '#shared/types/verdicts'
import { judgeCheck } from '#shared/utils/diagnosis/learning'
import { evaluateReading } from '#shared/utils/readings'

// The bench record's model, without Vue: the technician's working copy of a record (readings,
// notes, the close form so far), the verdict of each typed reading, and whether a step counts as
// done. The store (app/stores/benchRecord.ts) holds one record and calls these on it; the
// reasoning over the verdicts is in app/utils/benchReasoning.ts.

export interface StepWork { value: string, note: string, done: boolean }
export interface UnitDetails { model: string, serial: string, jobRef: string }
export interface BenchPhoto { id: number, url: string, thumbnailUrl: string }
export interface PartRow { name: string, partNumber: string, cost: string }

/** The close form as typed: text where the technician types, so nothing half-typed is lost. */
export interface CloseWork {
  /** `procedureSlug:causeKey`, or NO_FAULT / UNCONFIRMED, or '' before a choice. */
  cause: string
  outcome: Outcome | ''
  parts: PartRow[]
  minutes: string
  replacementCost: string
}

/** What the technician changes on an open record; everything else is the server's. */
export interface BenchWork {
  unit: UnitDetails
  steps: Record<string, StepWork>
  notes: string
  photos: BenchPhoto[]
  close: CloseWork
}

/** Close-form answers that are not a cause of the procedure. */
export const NO_FAULT = 'no-fault'
export const UNCONFIRMED = 'unconfirmed'

export type StepReading
  = | { state: 'empty' }
    | { state: 'unreadable', error: string }
    /** A likely slip (`580MV` on a diode test): no verdict until the technician says what was meant. */
    | { state: 'questioned', question: string, suggestion: string, display: string, expected: string }
    | { state: 'judged', verdict: StepVerdict, pass: boolean, display: string, expected: string | null, raises: string[] }

type JudgedStep = Pick<StepContent, 'key' | 'measurement' | 'verdicts'>

export const emptyStepWork = (): StepWork => ({ value: '', note: '', done: false })
export const emptyCloseWork = (): CloseWork => ({ cause: '', outcome: '', parts: [], minutes: '', replacementCost: '' })

export function emptyWork(): BenchWork {
  return { unit: { model: '', serial: '', jobRef: '' }, steps: {}, notes: '', photos: [], close: emptyCloseWork() }
}

/** An amount as typed (`2,40`, `38`): NaN for text that is not one, null for an empty field. */
export function readMoney(text: string): number | null {
  const t = text.trim().replace(/\s/g, '').replace(',', '.')
  if (t === '') return null
  return /^\d+(?:\.\d{0,2})?$/.test(t) ? Number(t) : Number.NaN
}

/** Whole minutes as typed: NaN for text that is not a count, null for an empty field. */
export function readMinutes(text: string): number | null {
  const t = text.trim()
  if (t === '') return null
  return /^\d{1,5}$/.test(t) ? Number(t) : Number.NaN
}

const textOf = (x: number | null | undefined) => (x === null || x === undefined ? '' : String(x))

/** The close form as saved on the record, back in the form's own terms. */
export function closeWorkFrom(draft: CloseDraft | null | undefined): CloseWork {
  if (!draft) return emptyCloseWork()
  return {
    cause: draft.confirmedCause ?? '',
    outcome: draft.outcome ?? '',
    parts: draft.parts.map(p => ({ name: p.name, partNumber: p.partNumber ?? '', cost: p.cost ? String(p.cost) : '' })),
    minutes: textOf(draft.minutes),
    replacementCost: textOf(draft.replacementCost),
  }
}

/** The close form as the record keeps it: what is readable of it (an amount half-typed is left out). */
export function closeDraftOf(close: CloseWork): CloseDraft {
  const minutes = readMinutes(close.minutes)
  const replacement = readMoney(close.replacementCost)
  return {
    confirmedCause: close.cause || null,
    outcome: close.outcome || null,
    parts: close.parts.filter(p => p.name.trim() || p.partNumber.trim() || p.cost.trim()).map((p) => {
      const cost = readMoney(p.cost)
      return { name: p.name.trim(), ...(p.partNumber.trim() ? { partNumber: p.partNumber.trim() } : {}), cost: cost !== null && !Number.isNaN(cost) ? cost : 0 }
    }),
    minutes: minutes !== null && !Number.isNaN(minutes) && minutes <= 10_000 ? minutes : null,
    replacementCost: replacement !== null && !Number.isNaN(replacement) && replacement <= 1_000_000 ? replacement : null,
  }
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
    close: closeWorkFrom(record.closeDraft),
  }
}

/** A plain copy: reactive proxies cannot be structured-cloned. */
export function copyWork(work: BenchWork): BenchWork {
  return JSON.parse(JSON.stringify(work)) as BenchWork
}

/** The body of a save (`PATCH /api/records/:id`, less the version). */
export function workBody(work: BenchWork) {
  return { unit: work.unit, steps: work.steps, notes: work.notes, photoIds: work.photos.map(p => p.id), closeDraft: closeDraftOf(work.close) }
}

/**
 * Judges what was typed on a step with the same functions the server uses, so the verdict needs
 * no round trip: a measured step by `evaluateReading` (asking rather than judging a likely
 * slip), a check by `judgeCheck` (`pass`, `fail`, `ok`…).
 */
export function judgeStep(step: JudgedStep, value: string): StepReading {
  if (value.trim() === '') return { state: 'empty' }
  if (!step.measurement) {
    const verdict = judgeCheck(value)
    if (!verdict) return { state: 'unreadable', error: 'say whether the check passed or failed' }
    return { state: 'judged', verdict, pass: verdict === 'pass', display: verdict === 'pass' ? 'Passed' : 'Failed', expected: null, raises: verdictCauses(step, verdict) }
  }
  const result = evaluateReading(value, step.measurement, [], { ask: true })
  if (!result.ok) return { state: 'unreadable', error: result.error }
  if (result.verdict === null) return { state: 'questioned', question: result.question, suggestion: result.suggestion, display: result.parsed.display, expected: result.expected }
  return { state: 'judged', verdict: result.verdict, pass: result.pass, display: result.parsed.display, expected: result.expected, raises: verdictCauses(step, result.verdict) }
}

/** The verdict of every step, as typed now. */
export function judgeSteps(content: Pick<RevisionContent, 'steps'>, steps: Record<string, StepWork>): Record<string, StepReading> {
  const out: Record<string, StepReading> = {}
  for (const step of content.steps) out[step.key] = judgeStep(step, steps[step.key]?.value ?? '')
  return out
}

/** The verdict of each step that has one, for the reasoning. */
export function verdictsOfReadings(readings: Record<string, StepReading>): Record<string, StepVerdict> {
  const out: Record<string, StepVerdict> = {}
  for (const [key, r] of Object.entries(readings)) if (r.state === 'judged') out[key] = r.verdict
  return out
}

/**
 * Whether a step is done, as its reading decides: a readable reading marks it done, one that
 * cannot be read (or is being asked about) cannot be done. Null when nothing was typed: then the
 * technician marks it by hand (a step that takes no reading, one done without a meter).
 */
export function doneByReading(reading: StepReading): boolean | null {
  if (reading.state === 'empty') return null
  return reading.state === 'judged'
}

/** How many of the guide's steps are done. */
export function progressOf(content: Pick<RevisionContent, 'steps'>, steps: Record<string, StepWork>): { done: number, total: number } {
  return { done: content.steps.filter(s => steps[s.key]?.done).length, total: content.steps.length }
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
  const [a, b] = [mine.close ?? emptyCloseWork(), theirs.close ?? emptyCloseWork()]
  add('Confirmed cause', a.cause, b.cause)
  add('Outcome', a.outcome, b.outcome)
  add('Time on the job', a.minutes, b.minutes)
  add('Parts', a.parts.map(p => p.name).join(', '), b.parts.map(p => p.name).join(', '))
  add('A new unit would cost', a.replacementCost, b.replacementCost)
  return out
}
