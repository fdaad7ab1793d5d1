import { defineStore } from 'pinia'
import { computed, ref, toRaw, watch } from 'vue'
import { apiErrorFields, apiErrorMessage, saveFailure } from '../utils/apiError'
import { saveStatusOf, serialSave } from '../utils/serialSave'
import { RevisionContent } from '#shared/types/procedure'
import { HAZARDS, type Hazard } from '#shared/types/hazards'
import { BASE_UNIT, QUANTITIES, type Quantity } from '#shared/types/measurement'
import type { AttachmentDto, RevisionDetailDto } from '#shared/types/procedure-api'
import { describeZodError } from '#shared/utils/validation'

/** How long the editor waits after the last keystroke before it saves. */
export const SAVE_DELAY_MS = 1500

export interface DraftMeasurement {
  quantity: Quantity
  unit: string
  min?: number
  max?: number
  nominal?: number
  tolerancePct?: number
  openExpected?: boolean
}
export interface DraftCause { key: string, name: string, detail: string, prior: number }
export interface DraftStep {
  key: string
  title: string
  instruction: string
  measurement?: DraftMeasurement
  failPointsTo: string[]
  imageIds: number[]
}
export interface DraftPart { name: string, partNumber: string, substitutes: string[] }

/**
 * The editor's working copy of a revision: every list present and every text a string, so the
 * form can bind to it while it is still incomplete. Index positions match the saved content,
 * so a field path from validation (`steps.2.measurement.unit`) names the same input here.
 */
export interface DraftContent {
  title: string
  deviceType: string
  appliesTo: string[]
  summary: string
  symptoms: string[]
  hazards: Hazard[]
  causes: DraftCause[]
  steps: DraftStep[]
  parts: DraftPart[]
  fix: string
  verification: string
}

/** A stored image as the editor needs it (an upload answers without mime, bytes or caption). */
export type DraftAttachment = Pick<AttachmentDto, 'id' | 'url' | 'thumbnailUrl' | 'width' | 'height'> & Partial<Pick<AttachmentDto, 'mime' | 'bytes'>> & { caption: string }

export interface DraftVersion { content: DraftContent, changeNote: string }

export const DEFAULT_PRIOR = 0.2

const text = (v: unknown): string => (typeof v === 'string' ? v : '')
const list = <T>(v: unknown): T[] => (Array.isArray(v) ? (v as T[]) : [])
const num = (v: unknown): number | undefined => (typeof v === 'number' && Number.isFinite(v) ? v : undefined)

/** Fills every missing part of a stored (possibly incomplete) revision body. */
export function normaliseDraft(raw: unknown): DraftContent {
  const c = (raw ?? {}) as Record<string, unknown>
  return {
    title: text(c.title),
    deviceType: text(c.deviceType),
    appliesTo: list<string>(c.appliesTo).map(text),
    summary: text(c.summary),
    symptoms: list<string>(c.symptoms).map(text),
    hazards: list<Hazard>(c.hazards).filter(h => (HAZARDS as readonly string[]).includes(h)),
    causes: list<Record<string, unknown>>(c.causes).map(cause => ({
      key: text(cause.key),
      name: text(cause.name),
      detail: text(cause.detail),
      prior: num(cause.prior) ?? DEFAULT_PRIOR,
    })),
    steps: list<Record<string, unknown>>(c.steps).map((step) => {
      const m = step.measurement as Record<string, unknown> | undefined
      const quantity = (QUANTITIES as readonly string[]).includes(text(m?.quantity)) ? (m!.quantity as Quantity) : 'dc_voltage'
      return {
        key: text(step.key),
        title: text(step.title),
        instruction: text(step.instruction),
        measurement: m
          ? {
              quantity,
              unit: text(m.unit) || BASE_UNIT[quantity],
              min: num(m.min),
              max: num(m.max),
              nominal: num(m.nominal),
              tolerancePct: num(m.tolerancePct),
              openExpected: m.openExpected === true ? true : undefined,
            }
          : undefined,
        failPointsTo: list<string>(step.failPointsTo).map(text),
        imageIds: list<number>(step.imageIds).filter(id => Number.isInteger(id)),
      }
    }),
    parts: list<Record<string, unknown>>(c.parts).map(part => ({
      name: text(part.name),
      partNumber: text(part.partNumber),
      substitutes: list<string>(part.substitutes).map(text),
    })),
    fix: text(c.fix),
    verification: text(c.verification),
  }
}

/** A plain copy: drafts are JSON by nature, and reactive proxies cannot be structured-cloned. */
export function cloneDraft(d: DraftContent): DraftContent {
  return normaliseDraft(JSON.parse(JSON.stringify(d)))
}

function withoutUndefined<T extends object>(o: T): T {
  return Object.fromEntries(Object.entries(o).filter(([, v]) => v !== undefined)) as T
}

/** The body sent to the server: same positions as the draft, empty optional parts left out. */
export function draftPayload(d: DraftContent): Record<string, unknown> {
  return {
    ...d,
    steps: d.steps.map(s => withoutUndefined({
      key: s.key,
      title: s.title,
      instruction: s.instruction,
      measurement: s.measurement ? withoutUndefined({ ...s.measurement }) : undefined,
      failPointsTo: s.failPointsTo.length ? s.failPointsTo : undefined,
      imageIds: s.imageIds.length ? s.imageIds : undefined,
    })),
    parts: d.parts.map(p => withoutUndefined({ name: p.name, partNumber: p.partNumber.trim() ? p.partNumber : undefined, substitutes: p.substitutes })),
  }
}

/** A short key from a name, in the form RevisionContent accepts (`MOSFET Q1 shorted` → `mosfet_q1_shorted`). */
export function keyFromName(name: string, taken: Iterable<string>, fallback: string): string {
  const base = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '_')
    .replace(/^_+|_+$/g, '')
    .slice(0, 32)
    .replace(/_+$/, '') || fallback
  const used = new Set(taken)
  if (!used.has(base)) return base
  for (let n = 2; ; n++) {
    const candidate = `${base}_${n}`
    if (!used.has(candidate)) return candidate
  }
}

/** The id of the input that edits a field path; error summaries link to it. */
export function fieldId(path: string): string {
  return `field-${path.replace(/\./g, '-')}`
}

function parentOf(path: string): string {
  const i = path.lastIndexOf('.')
  return i < 0 ? '' : path.slice(0, i)
}

/**
 * Whether visiting field `visited` reveals the error at `path`: the field itself, the items of a
 * list field (`steps.1.failPointsTo.0` under `steps.1.failPointsTo`), and the fields of one
 * measurement, whose rules are about the fields together (a range needs min or max).
 */
function isShownAfterVisit(path: string, visited: string): boolean {
  if (path === visited || parentOf(path) === visited) return true
  const group = parentOf(path)
  return group.endsWith('.measurement') && parentOf(visited) === group
}

function moveWithin<T>(items: T[], from: number, to: number): void {
  if (to < 0 || to >= items.length || from === to) return
  const [item] = items.splice(from, 1)
  items.splice(to, 0, item as T)
}

/**
 * The draft open in the editor, shared by every part of the form. Each change is saved
 * SAVE_DELAY_MS after the last one with the draft's save counter (`version`); a stale counter
 * means the draft was saved elsewhere, and both versions are kept until the author chooses.
 */
export const useProcedureDraftStore = defineStore('procedureDraft', () => {
  const revisionId = ref<number | null>(null)
  const procedureSlug = ref('')
  const version = ref(0)
  const content = ref<DraftContent>(normaliseDraft({}))
  const changeNote = ref('')
  const attachments = ref<Record<string, DraftAttachment>>({})

  const saving = ref(false)
  const failure = ref('')
  const savedAt = ref<string | null>(null)
  const conflict = ref<{ mine: DraftVersion, theirs: RevisionDetailDto } | null>(null)
  const setAside = ref<DraftVersion | null>(null)
  /** Cause and step keys still derived from their name (new in this sitting, not yet relied on). */
  const keysFollowingNames = ref<string[]>([])

  const touched = ref<Record<string, true>>({})
  const showAllErrors = ref(false)
  const serverErrors = ref<Record<string, string>>({})
  const focusRequest = ref<{ path: string, at: number } | null>(null)

  // Change detection compares serialised bodies: loading a revision is not an edit, and an edit
  // typed while a save is in flight stays unsaved until the next one.
  const savedJson = ref('')
  const seenJson = ref('')
  let timer: ReturnType<typeof setTimeout> | undefined
  // Stable identities for list items, so a cause whose key follows its name, or a moved step,
  // keeps its inputs (and their focus) while it changes.
  const itemIds = new WeakMap<object, number>()
  let nextItemId = 1

  const payload = computed(() => draftPayload(content.value))
  const bodyJson = computed(() => JSON.stringify({ content: payload.value, changeNote: changeNote.value }))
  const dirty = computed(() => seenJson.value !== savedJson.value)

  const status = computed(() => saveStatusOf({ conflict: conflict.value, saving: saving.value, failure: failure.value, dirty: dirty.value }))

  const clientErrors = computed<Record<string, string>>(() => {
    const parsed = RevisionContent.safeParse(payload.value)
    return parsed.success ? {} : describeZodError(parsed.error).fields
  })
  const complete = computed(() => Object.keys(clientErrors.value).length === 0)

  /** Errors the form shows: those of fields already visited, or all of them after a submit. */
  const visibleErrors = computed<Record<string, string>>(() => {
    const all = { ...clientErrors.value, ...serverErrors.value }
    if (showAllErrors.value) return all
    const seen = Object.keys(touched.value)
    return Object.fromEntries(Object.entries(all).filter(([path]) => seen.some(t => isShownAfterVisit(path, t))))
  })

  function load(detail: RevisionDetailDto) {
    clearTimeout(timer)
    revisionId.value = detail.id
    procedureSlug.value = detail.procedureSlug
    version.value = detail.version
    content.value = normaliseDraft(detail.content)
    changeNote.value = detail.changeNote ?? ''
    attachments.value = Object.fromEntries(Object.entries(detail.attachments ?? {}).map(([id, a]) => [id, { ...a }]))
    savedAt.value = detail.updatedAt
    failure.value = ''
    conflict.value = null
    keysFollowingNames.value = []
    touched.value = {}
    showAllErrors.value = false
    serverErrors.value = {}
    savedJson.value = bodyJson.value
    seenJson.value = bodyJson.value
  }

  function schedule() {
    if (import.meta.server) return
    clearTimeout(timer)
    timer = setTimeout(() => void save(), SAVE_DELAY_MS)
  }

  watch(bodyJson, (json) => {
    if (json === seenJson.value) return
    seenJson.value = json
    // Server field errors describe the body that was submitted; after an edit the client's own
    // check (the same schema) speaks for the form again.
    serverErrors.value = {}
    schedule()
  })

  async function putOnce(): Promise<boolean> {
    if (revisionId.value === null || conflict.value) return false
    const json = bodyJson.value
    const sent: DraftVersion = { content: cloneDraft(content.value), changeNote: changeNote.value }
    saving.value = true
    try {
      const res = await $fetch<{ revision: { id: number, version: number } }>(`/api/revisions/${revisionId.value}`, {
        method: 'PUT',
        body: { version: version.value, content: JSON.parse(json).content, changeNote: changeNote.value },
      })
      version.value = res.revision.version
      savedJson.value = json
      savedAt.value = new Date().toISOString()
      failure.value = ''
      return true
    }
    catch (error) {
      const why = saveFailure<RevisionDetailDto>(error)
      if ('current' in why) conflict.value = { mine: sent, theirs: why.current }
      else if (Object.keys(why.fields).length) serverErrors.value = why.fields
      failure.value = 'current' in why ? '' : why.message
      return false
    }
    finally {
      saving.value = false
    }
  }

  /** `save`: now, or once more after the save in flight; `flush`: until every change is on the server. */
  const saver = serialSave(() => putOnce(), { dirty: () => dirty.value, blocked: () => Boolean(conflict.value), beforeSave: () => clearTimeout(timer) })
  const { save, flush } = saver

  /** Conflict: write this tab's version over the one saved elsewhere. */
  async function keepMine(): Promise<boolean> {
    const c = conflict.value
    if (!c) return false
    version.value = c.theirs.version
    content.value = cloneDraft(c.mine.content)
    changeNote.value = c.mine.changeNote
    for (const [id, a] of Object.entries(c.theirs.attachments ?? {})) attachments.value[id] ??= { ...a }
    conflict.value = null
    return save()
  }

  /** Conflict: continue from the version saved elsewhere; this tab's version is set aside, not dropped. */
  function takeTheirs() {
    const c = conflict.value
    if (!c) return
    const mine = c.mine
    const keptAttachments = attachments.value
    load(c.theirs)
    attachments.value = { ...keptAttachments, ...attachments.value }
    setAside.value = mine
  }

  /** Brings the set-aside version back as the current text (saved as a new change). */
  function restoreSetAside() {
    if (!setAside.value) return
    content.value = cloneDraft(setAside.value.content)
    changeNote.value = setAside.value.changeNote
    setAside.value = null
  }

  function discardSetAside() {
    setAside.value = null
  }

  // Field helpers ------------------------------------------------------------------------------

  function fieldAttrs(path: string): { 'id': string, 'data-path': string, 'aria-invalid'?: 'true', 'aria-describedby'?: string, 'class'?: string } {
    const error = visibleErrors.value[path]
    return {
      'id': fieldId(path),
      'data-path': path,
      'aria-invalid': error ? 'true' : undefined,
      'aria-describedby': error ? `${fieldId(path)}-error` : undefined,
      'class': error ? '!border-verdict-fail' : undefined,
    }
  }

  function itemKey(item: object): number {
    const raw = toRaw(item)
    let id = itemIds.get(raw)
    if (id === undefined) {
      id = nextItemId++
      itemIds.set(raw, id)
    }
    return id
  }

  function touch(path: string) {
    if (path && !touched.value[path]) touched.value[path] = true
  }

  function requestFocus(path: string) {
    focusRequest.value = { path, at: Date.now() }
  }

  // Causes ---------------------------------------------------------------------------------------

  function allKeys(kind: 'causes' | 'steps'): string[] {
    return content.value[kind].map(i => i.key)
  }

  function addCause() {
    const key = keyFromName('', allKeys('causes'), `cause_${content.value.causes.length + 1}`)
    content.value.causes.push({ key, name: '', detail: '', prior: DEFAULT_PRIOR })
    keysFollowingNames.value.push(`cause:${key}`)
  }

  function renameCause(index: number, name: string) {
    const cause = content.value.causes[index]
    if (!cause) return
    cause.name = name
    const marker = `cause:${cause.key}`
    const follows = keysFollowingNames.value.indexOf(marker)
    if (follows < 0 || !name.trim()) return
    const next = keyFromName(name, allKeys('causes').filter(k => k !== cause.key), `cause_${index + 1}`)
    if (next === cause.key) return
    for (const step of content.value.steps) step.failPointsTo = step.failPointsTo.map(k => (k === cause.key ? next : k))
    keysFollowingNames.value[follows] = `cause:${next}`
    cause.key = next
  }

  function removeCause(index: number) {
    const [cause] = content.value.causes.splice(index, 1)
    if (!cause) return
    for (const step of content.value.steps) step.failPointsTo = step.failPointsTo.filter(k => k !== cause.key)
  }

  function moveCause(from: number, to: number) {
    moveWithin(content.value.causes, from, to)
  }

  // Steps ----------------------------------------------------------------------------------------

  function addStep() {
    const key = keyFromName('', allKeys('steps'), `step_${content.value.steps.length + 1}`)
    content.value.steps.push({ key, title: '', instruction: '', failPointsTo: [], imageIds: [] })
    keysFollowingNames.value.push(`step:${key}`)
  }

  function retitleStep(index: number, title: string) {
    const step = content.value.steps[index]
    if (!step) return
    step.title = title
    const marker = `step:${step.key}`
    const follows = keysFollowingNames.value.indexOf(marker)
    if (follows < 0 || !title.trim()) return
    const next = keyFromName(title, allKeys('steps').filter(k => k !== step.key), `step_${index + 1}`)
    if (next === step.key) return
    keysFollowingNames.value[follows] = `step:${next}`
    step.key = next
  }

  function removeStep(index: number) {
    content.value.steps.splice(index, 1)
  }

  function moveStep(from: number, to: number) {
    moveWithin(content.value.steps, from, to)
  }

  function keyFollowsName(kind: 'cause' | 'step', key: string): boolean {
    return keysFollowingNames.value.includes(`${kind}:${key}`)
  }

  // Parts ----------------------------------------------------------------------------------------

  function addPart() {
    content.value.parts.push({ name: '', partNumber: '', substitutes: [] })
  }

  function removePart(index: number) {
    content.value.parts.splice(index, 1)
  }

  function movePart(from: number, to: number) {
    moveWithin(content.value.parts, from, to)
  }

  // Images ---------------------------------------------------------------------------------------

  function attachImage(stepIndex: number, image: DraftAttachment) {
    const step = content.value.steps[stepIndex]
    if (!step) return
    attachments.value[String(image.id)] = image
    if (!step.imageIds.includes(image.id)) step.imageIds.push(image.id)
  }

  function detachImage(stepIndex: number, imageId: number) {
    const step = content.value.steps[stepIndex]
    if (step) step.imageIds = step.imageIds.filter(id => id !== imageId)
  }

  function moveImage(stepIndex: number, from: number, to: number) {
    const step = content.value.steps[stepIndex]
    if (step) moveWithin(step.imageIds, from, to)
  }

  // Submission -----------------------------------------------------------------------------------

  type SubmitResult = { ok: true, number: number } | { ok: false, message: string }

  /** Saves what is pending, checks the whole revision with the shared schema, then submits it. */
  async function submit(): Promise<SubmitResult> {
    showAllErrors.value = true
    if (!(await flush())) return { ok: false, message: conflict.value ? 'Choose which version to keep before you submit.' : 'Your latest changes are not saved yet, so nothing was submitted.' }
    if (!complete.value) return { ok: false, message: 'The revision is not complete yet. Fix the fields listed below, then submit again.' }
    try {
      const res = await $fetch<{ revision: { id: number, number: number, state: string } }>(`/api/revisions/${revisionId.value}/submit`, { method: 'POST' })
      return { ok: true, number: res.revision.number }
    }
    catch (error) {
      const fields = apiErrorFields(error)
      if (Object.keys(fields).length) serverErrors.value = fields
      return { ok: false, message: apiErrorMessage(error, 'The revision could not be submitted.') }
    }
  }

  return {
    revisionId, procedureSlug, version, content, changeNote, attachments,
    saving, failure, savedAt, conflict, setAside, keysFollowingNames,
    touched, showAllErrors, serverErrors, focusRequest,
    // Returned so they travel with the rest of the state from the server-rendered page.
    savedJson, seenJson,
    payload, dirty, status, clientErrors, complete, visibleErrors,
    load, save, flush, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    fieldAttrs, touch, requestFocus, itemKey,
    addCause, renameCause, removeCause, moveCause, keyFollowsName,
    addStep, retitleStep, removeStep, moveStep,
    addPart, removePart, movePart,
    attachImage, detachImage, moveImage,
    submit,
  }
})
