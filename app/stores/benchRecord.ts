import { defineStore } from 'pinia'
import { computed, ref, watch } from 'vue'
import { saveFailure } from '../utils/apiError'
import { saveStatusOf, serialSave } from '../utils/serialSave'
import type { CauseContent, RevisionContent, StepContent } from '#shared/types/procedure'
import { OUTCOME_LABELS, type EvidenceCauseDto, type Outcome, type RecordDto } from '#shared/types/records'
import { evaluateReading, type ReadingVerdict } from '#shared/utils/readings'

/** How long the guided view waits after the last keystroke before it saves. */
export const RECORD_SAVE_DELAY_MS = 900

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

function emptyWork(): BenchWork {
  return { unit: { model: '', serial: '', jobRef: '' }, steps: {}, notes: '', photos: [] }
}

/** The technician's working copy of a record: every step of the guide present, even untouched ones. */
export function workFromRecord(record: RecordDto): BenchWork {
  const steps: Record<string, StepWork> = {}
  for (const step of record.guide?.content.steps ?? []) steps[step.key] = { value: '', note: '', done: false }
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

function copyWork(work: BenchWork): BenchWork {
  return JSON.parse(JSON.stringify(work)) as BenchWork
}

/** Judges what was typed on a step with the same evaluator the server uses, so the verdict needs no round trip. */
export function judgeStep(step: Pick<StepContent, 'measurement' | 'failPointsTo'>, value: string): StepReading {
  if (!step.measurement || value.trim() === '') return { state: 'empty' }
  const result = evaluateReading(value, step.measurement, step.failPointsTo ?? [])
  if (!result.ok) return { state: 'unreadable', error: result.error }
  return { state: 'judged', verdict: result.verdict, pass: result.pass, display: result.parsed.display, expected: result.expected, raises: result.raises }
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

const EUROS = new Intl.NumberFormat('en-IE', { style: 'currency', currency: 'EUR' })

/** Amounts in euros, as the records store them (the CSV export names its columns in euros too). */
export function formatMoney(x: number | null | undefined): string {
  return typeof x === 'number' && Number.isFinite(x) ? EUROS.format(x) : '—'
}

export function formatMinutes(x: number | null | undefined): string {
  if (typeof x !== 'number' || !Number.isFinite(x)) return '—'
  if (x < 60) return `${x} min`
  const h = Math.floor(x / 60)
  const m = x % 60
  return m ? `${h} h ${m} min` : `${h} h`
}

export const AMENDABLE_FIELD_LABELS: Record<string, string> = {
  confirmedCause: 'Confirmed cause',
  outcome: 'Outcome',
  parts: 'Parts used',
  minutes: 'Time on the job',
  replacementCost: 'Cost of a new unit',
  comeback: 'Came back',
  notes: 'Notes',
  photoIds: 'Bench photos',
}

/** One side of an amendment in words; the server keeps whatever shape the field had. */
export function describeAmendedValue(field: string, value: unknown, record: Pick<RecordDto, 'candidates' | 'confirmedCause'>): string {
  if (value === null || value === undefined || value === '') return '—'
  switch (field) {
    case 'confirmedCause': {
      if (typeof value === 'object' && value && 'label' in value) return String((value as { label: unknown }).label)
      const id = String(value)
      const exact = record.candidates.find(c => c.id === id)?.label ?? (record.confirmedCause?.id === id ? record.confirmedCause.label : undefined)
      if (exact) return exact
      // Older amendments name the procedure by number rather than slug: match on the cause key.
      const key = id.slice(id.indexOf(':') + 1)
      const byKey = record.candidates.filter(c => c.id.endsWith(`:${key}`))
      return byKey.length === 1 ? byKey[0]!.label : id
    }
    case 'outcome':
      return OUTCOME_LABELS[value as Outcome] ?? String(value)
    case 'parts': {
      if (!Array.isArray(value)) return String(value)
      if (!value.length) return 'none'
      return value.map((p: { name?: string, partNumber?: string, cost?: number }) => `${p.name ?? '?'}${p.partNumber ? ` (${p.partNumber})` : ''} ${formatMoney(p.cost ?? 0)}`).join('; ')
    }
    case 'minutes':
      return formatMinutes(Number(value))
    case 'replacementCost':
      return formatMoney(Number(value))
    case 'comeback':
      return value === true ? 'yes' : 'no'
    case 'photoIds':
      return Array.isArray(value) ? `${value.length} ${value.length === 1 ? 'photo' : 'photos'}` : String(value)
    default:
      return typeof value === 'string' ? value : JSON.stringify(value)
  }
}

/**
 * The record open on the guided view, shared by the steps, the causes panel and the close form.
 * Each change is saved RECORD_SAVE_DELAY_MS after the last one with the record's `version`; a
 * stale version means someone else saved the record meanwhile, and both copies stay until the
 * technician chooses.
 */
export const useBenchRecordStore = defineStore('benchRecord', () => {
  const record = ref<RecordDto | null>(null)
  const version = ref(0)
  const work = ref<BenchWork>(emptyWork())
  const saving = ref(false)
  const failure = ref('')
  const savedAt = ref<string | null>(null)
  const conflict = ref<{ mine: BenchWork, theirs: RecordDto } | null>(null)
  const setAside = ref<BenchWork | null>(null)

  // Change detection compares serialised bodies: loading a record is not an edit, and an edit
  // typed while a save is in flight stays unsaved until the next one.
  const savedJson = ref('')
  const seenJson = ref('')
  let timer: ReturnType<typeof setTimeout> | undefined

  const open = computed(() => record.value?.status === 'in_progress')
  const editable = computed(() => open.value && record.value?.can.edit === true)
  const guide = computed(() => record.value?.guide ?? null)

  const body = computed(() => ({
    unit: work.value.unit,
    steps: work.value.steps,
    notes: work.value.notes,
    photoIds: work.value.photos.map(p => p.id),
  }))
  const bodyJson = computed(() => JSON.stringify(body.value))
  const dirty = computed(() => seenJson.value !== savedJson.value)

  const status = computed(() => saveStatusOf({ conflict: conflict.value, saving: saving.value, failure: failure.value, dirty: dirty.value }))

  /** Verdicts of every step that has a measurement, as typed now. */
  const readings = computed<Record<string, StepReading>>(() => {
    const out: Record<string, StepReading> = {}
    for (const step of guide.value?.content.steps ?? []) {
      if (step.measurement) out[step.key] = judgeStep(step, work.value.steps[step.key]?.value ?? '')
    }
    return out
  })

  const raised = computed(() => (guide.value ? raisedByReadings(guide.value.content, work.value.steps) : {}))

  const progress = computed(() => {
    const steps = guide.value?.content.steps ?? []
    return { done: steps.filter(s => work.value.steps[s.key]?.done).length, total: steps.length }
  })

  function likelyCauses(evidence: EvidenceCauseDto[] | null | undefined): LikelyCause[] {
    const r = record.value
    if (!r?.guide || !r.procedure) return []
    return rankLikelyCauses({ procedureSlug: r.procedure.slug, causes: r.guide.content.causes, evidence, raised: raised.value })
  }

  function markSaved() {
    savedJson.value = bodyJson.value
    seenJson.value = bodyJson.value
  }

  function load(next: RecordDto) {
    clearTimeout(timer)
    record.value = next
    version.value = next.version
    work.value = workFromRecord(next)
    failure.value = ''
    conflict.value = null
    savedAt.value = null
    markSaved()
  }

  function schedule() {
    if (import.meta.server || !editable.value) return
    clearTimeout(timer)
    timer = setTimeout(() => void save(), RECORD_SAVE_DELAY_MS)
  }

  watch(bodyJson, (json) => {
    if (json === seenJson.value) return
    seenJson.value = json
    schedule()
  })

  async function patchOnce(): Promise<boolean> {
    const r = record.value
    if (!r || conflict.value || !editable.value) return false
    const json = bodyJson.value
    const sent = copyWork(work.value)
    saving.value = true
    try {
      const res = await $fetch<{ record: RecordDto }>(`/api/records/${r.id}`, {
        method: 'PATCH',
        body: { version: version.value, ...JSON.parse(json) },
      })
      // The server's copy brings its own verdicts and raised causes; the working copy stays as
      // typed, because the technician may have gone on typing while the save was in flight.
      record.value = res.record
      version.value = res.record.version
      savedJson.value = json
      savedAt.value = new Date().toISOString()
      failure.value = ''
      return true
    }
    catch (error) {
      const why = saveFailure<RecordDto>(error)
      if ('current' in why) conflict.value = { mine: sent, theirs: why.current }
      failure.value = 'current' in why ? '' : why.message
      return false
    }
    finally {
      saving.value = false
    }
  }

  /** `save`: now, or once more after the save in flight; `flush`: until every change is on the server. */
  const saver = serialSave(() => patchOnce(), { dirty: () => dirty.value, blocked: () => Boolean(conflict.value), beforeSave: () => clearTimeout(timer) })
  const { save, flush } = saver

  /**
   * Last-chance save when the page goes away (tab closed, phone locked): a keepalive request
   * outlives the page, where an ordinary one would be cancelled with it.
   */
  function saveOnLeave() {
    const r = record.value
    if (!r || !dirty.value || conflict.value || !editable.value || saver.busy) return
    clearTimeout(timer)
    void fetch(`/api/records/${r.id}`, {
      method: 'PATCH',
      keepalive: true,
      credentials: 'same-origin',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ version: version.value, ...body.value }),
    }).then(async (res) => {
      if (!res.ok) return
      const answer = await res.json() as { record: RecordDto }
      record.value = answer.record
      version.value = answer.record.version
      markSaved()
    }).catch(() => undefined)
  }

  /** Conflict: write this copy over the one saved elsewhere. */
  function keepMine(): Promise<boolean> {
    const c = conflict.value
    if (!c) return Promise.resolve(false)
    record.value = c.theirs
    version.value = c.theirs.version
    work.value = copyWork(c.mine)
    conflict.value = null
    return save()
  }

  /** Conflict: continue from the copy saved elsewhere; this one is set aside, not dropped. */
  function takeTheirs() {
    const c = conflict.value
    if (!c) return
    const mine = c.mine
    load(c.theirs)
    setAside.value = mine
  }

  function restoreSetAside() {
    if (!setAside.value) return
    work.value = copyWork(setAside.value)
    setAside.value = null
  }

  function discardSetAside() {
    setAside.value = null
  }

  function stepWork(key: string): StepWork {
    return (work.value.steps[key] ??= { value: '', note: '', done: false })
  }

  async function close(payload: Record<string, unknown>): Promise<RecordDto> {
    const r = record.value
    if (!r) throw new Error('no record is open')
    // Readings typed just before closing must be in the record the close is judged on.
    const saved = await flush()
    if (!saved) throw Object.assign(new Error('unsaved'), { data: { message: 'The latest readings are not saved yet; save them before closing.' } })
    const res = await $fetch<{ record: RecordDto }>(`/api/records/${r.id}/close`, { method: 'POST', body: payload })
    load(res.record)
    return res.record
  }

  async function amend(payload: { reason: string, changes: Record<string, unknown> }): Promise<RecordDto> {
    const r = record.value
    if (!r) throw new Error('no record is open')
    const res = await $fetch<{ record: RecordDto }>(`/api/records/${r.id}/amendments`, { method: 'POST', body: payload })
    load(res.record)
    return res.record
  }

  return {
    record, version, work, saving, failure, savedAt, conflict, setAside,
    open, editable, guide, dirty, status, readings, raised, progress,
    likelyCauses, load, save, flush, saveOnLeave, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    stepWork, close, amend,
  }
})
