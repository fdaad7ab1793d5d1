import { defineStore } from 'pinia'
import { computed, ref, toRaw } from 'vue'
import { useAutosave } from '../composables/useAutosave'
import { apiErrorFields, apiErrorMessage } from '../utils/apiError'
import {
  addDraftItem, addDraftPart, attachStepImage, cloneDraft, completenessErrors, detachStepImage, fieldId, moveWithin,
  readDraft, removeDraftCause, removeDraftStep, renameDraftItem, visibleErrors as errorsToShow, type KeyFollowers,
} from '../utils/procedureDraft'
import type { DraftContent } from '#shared/types/procedure'
import type { AttachmentDto, DraftSavedDto, RevisionDetailDto } from '#shared/types/procedure-api'

/** How long the editor waits after the last keystroke before it saves. */
export const SAVE_DELAY_MS = 1500

/** A stored image as the editor needs it (an upload answers without mime, bytes or caption). */
export type DraftAttachment = Pick<AttachmentDto, 'id' | 'url' | 'thumbnailUrl' | 'width' | 'height'> & Partial<Pick<AttachmentDto, 'mime' | 'bytes'>> & { caption: string }

export interface DraftVersion { content: DraftContent, changeNote: string }

/**
 * The draft open in the editor, shared by every part of the form: the state, the autosave
 * (`useAutosave`) and the model's operations (app/utils/procedureDraft.ts) applied to it. Each
 * change is saved SAVE_DELAY_MS after the last one with the draft's save counter (`version`); a
 * stale counter means the draft was saved elsewhere, and both versions are kept until the
 * author chooses.
 */
export const useProcedureDraftStore = defineStore('procedureDraft', () => {
  const revisionId = ref<number | null>(null)
  const procedureSlug = ref('')
  const content = ref<DraftContent>(readDraft({}))
  const changeNote = ref('')
  const attachments = ref<Record<string, DraftAttachment>>({})
  const keysFollowingNames = ref<KeyFollowers>([])

  const touched = ref<Record<string, true>>({})
  const showAllErrors = ref(false)
  const serverErrors = ref<Record<string, string>>({})
  const focusRequest = ref<{ path: string, at: number } | null>(null)

  const autosave = useAutosave<DraftVersion, RevisionDetailDto>({
    delayMs: SAVE_DELAY_MS,
    body: () => ({ content: content.value, changeNote: changeNote.value }),
    snapshot: () => ({ content: cloneDraft(content.value), changeNote: changeNote.value }),
    enabled: () => revisionId.value !== null,
    async send(body, version) {
      // The route's answer holds the model's branded `version`, which Nitro's inferred type turns into an object.
      const res = await $fetch<DraftSavedDto>(`/api/revisions/${revisionId.value}`, { method: 'PUT', body: { version, ...(body as DraftVersion) } })
      return res.revision.version
    },
    restore(mine, theirs) {
      content.value = cloneDraft(mine.content)
      changeNote.value = mine.changeNote
      for (const [id, a] of Object.entries(theirs?.attachments ?? {})) attachments.value[id] ??= { ...a }
    },
    load(theirs) {
      const kept = attachments.value
      load(theirs)
      attachments.value = { ...kept, ...attachments.value }
    },
    // Server field errors describe the body that was sent; after an edit the client's own check
    // (the same schema) speaks for the form again.
    onEdit: () => (serverErrors.value = {}),
    onFieldErrors: fields => (serverErrors.value = fields),
  })
  const { version, saving, failure, savedAt, conflict, setAside, savedJson, seenJson, dirty, status, save, flush, keepMine, takeTheirs, restoreSetAside, discardSetAside } = autosave

  const clientErrors = computed(() => completenessErrors(content.value))
  const complete = computed(() => Object.keys(clientErrors.value).length === 0)
  /** Errors the form shows: those of fields already visited, or all of them after a submit. */
  const visibleErrors = computed(() => errorsToShow({ ...clientErrors.value, ...serverErrors.value }, Object.keys(touched.value), showAllErrors.value))

  function load(detail: RevisionDetailDto) {
    revisionId.value = detail.id
    procedureSlug.value = detail.procedureSlug
    content.value = readDraft(detail.content)
    changeNote.value = detail.changeNote ?? ''
    attachments.value = Object.fromEntries(Object.entries(detail.attachments ?? {}).map(([id, a]) => [id, { ...a }]))
    keysFollowingNames.value = []
    touched.value = {}
    showAllErrors.value = false
    serverErrors.value = {}
    autosave.loaded({ version: detail.version, savedAt: detail.updatedAt })
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

  // Stable identities for list items, so a cause whose key follows its name, or a moved step,
  // keeps its inputs (and their focus) while it changes.
  const itemIds = new WeakMap<object, number>()
  let nextItemId = 1
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

  // Causes, steps, parts, images ---------------------------------------------------------------

  const c = () => content.value

  function attachImage(stepIndex: number, image: DraftAttachment) {
    const step = c().steps[stepIndex]
    if (!step) return
    attachments.value[String(image.id)] = image
    attachStepImage(step, image.id)
  }

  function withStep(stepIndex: number, change: (step: DraftContent['steps'][number]) => void) {
    const step = c().steps[stepIndex]
    if (step) change(step)
  }

  // Submission -----------------------------------------------------------------------------------

  type SubmitResult = { ok: true, number: number } | { ok: false, message: string }

  /** Saves what is pending, checks the whole revision with the shared schema, then submits it. */
  async function submit(): Promise<SubmitResult> {
    showAllErrors.value = true
    if (!(await flush())) return { ok: false, message: conflict.value ? 'Choose which version to keep before you submit.' : 'Your latest changes are not saved yet, so nothing was submitted.' }
    if (!complete.value) return { ok: false, message: 'The revision is not complete yet. Fix the fields listed below, then submit again.' }
    try {
      const res = await $fetch(`/api/revisions/${revisionId.value}/submit`, { method: 'POST' })
      return { ok: true, number: res.revision.number! }
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
    dirty, status, clientErrors, complete, visibleErrors,
    load, save, flush, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    fieldAttrs, touch, requestFocus, itemKey,
    addCause: () => addDraftItem(c(), keysFollowingNames.value, 'cause'),
    renameCause: (index: number, name: string) => renameDraftItem(c(), keysFollowingNames.value, 'cause', index, name),
    removeCause: (index: number) => removeDraftCause(c(), index),
    moveCause: (from: number, to: number) => moveWithin(c().causes, from, to),
    addStep: () => addDraftItem(c(), keysFollowingNames.value, 'step'),
    retitleStep: (index: number, title: string) => renameDraftItem(c(), keysFollowingNames.value, 'step', index, title),
    removeStep: (index: number) => removeDraftStep(c(), index),
    moveStep: (from: number, to: number) => moveWithin(c().steps, from, to),
    addPart: () => addDraftPart(c()),
    removePart: (index: number) => void c().parts.splice(index, 1),
    movePart: (from: number, to: number) => moveWithin(c().parts, from, to),
    attachImage,
    detachImage: (stepIndex: number, imageId: number) => withStep(stepIndex, step => detachStepImage(step, imageId)),
    moveImage: (stepIndex: number, from: number, to: number) => withStep(stepIndex, step => moveWithin(step.imageIds ?? [], from, to)),
    submit,
  }
})
