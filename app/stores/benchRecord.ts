import { defineStore } from 'pinia'
import { computed, ref, watch } from 'vue'
import { useAutosave } from '../composables/useAutosave'
import {
  NO_FAULT, UNCONFIRMED, copyWork, doneByReading, emptyStepWork, emptyWork, judgeStep, judgeSteps, progressOf, workBody, workFromRecord,
  type BenchWork, type StepWork,
} from '../utils/benchWork'
import { reasonAbout } from '../utils/benchReasoning'
import type { RecordDto } from '#shared/types/records'
import { useOfflineStore } from './offline'

/** How long the guided view waits after the last keystroke before it saves. */
export const RECORD_SAVE_DELAY_MS = 900

/**
 * The record open on the guided view, shared by the steps, the causes panel and the close form:
 * the state, the autosave (`useAutosave`) and the bench model (app/utils/benchWork.ts) applied
 * to it. Each change is saved RECORD_SAVE_DELAY_MS after the last one with the record's
 * `version`; a stale version means someone else saved the record meanwhile, and both copies stay
 * until the technician chooses.
 */
export const useBenchRecordStore = defineStore('benchRecord', () => {
  const record = ref<RecordDto | null>(null)
  const work = ref<BenchWork>(emptyWork())
  // Saves go through the offline store: kept on the phone while the connection is away.
  const offline = useOfflineStore()

  const open = computed(() => record.value?.status === 'in_progress')
  const editable = computed(() => open.value && record.value?.can.edit === true)
  const guide = computed(() => record.value?.guide ?? null)
  const guideSteps = computed(() => ({ steps: guide.value?.content.steps ?? [] }))

  const autosave = useAutosave<BenchWork, RecordDto>({
    delayMs: RECORD_SAVE_DELAY_MS,
    body: () => workBody(work.value),
    snapshot: () => copyWork(work.value),
    enabled: () => editable.value,
    async send(body, version) {
      const saved = await offline.saveRecord(record.value!.id, body as ReturnType<typeof workBody>, version, copyWork(work.value))
      // Kept on the phone: the version stays the one these saves build on until they are sent.
      if (!saved) return version
      // The server's copy brings its own verdicts and raised causes; the working copy stays as
      // typed, because the technician may have gone on typing while the save was in flight.
      record.value = saved
      return saved.version
    },
    restore(mine, theirs) {
      if (theirs) record.value = theirs
      work.value = copyWork(mine)
    },
    load,
  })
  const { version, saving, failure, savedAt, conflict, setAside, dirty, status, save, flush, restoreSetAside, discardSetAside } = autosave

  // Saves kept on the phone and sent later: the page follows the server's copy as they land,
  // and a record saved elsewhere meanwhile shows both versions, as a stale save here would.
  offline.onSynced((id, saved) => {
    if (record.value?.id !== id) return
    record.value = saved
    version.value = saved.version
  })
  offline.onConflict((id, theirs) => {
    if (record.value?.id === id) autosave.raiseConflict(copyWork(work.value), theirs)
  })
  // The queue is read from the device after the page has loaded its record.
  watch(() => offline.ready, (ready) => {
    if (ready && !dirty.value) takeUpKept()
  })

  /** Puts back what was typed on this phone and not sent yet (after a reload with no connection). */
  function takeUpKept() {
    const r = record.value
    if (!r) return
    const kept = offline.savesOf(r.id).at(-1)
    if (kept) {
      work.value = copyWork(kept.work as BenchWork)
      autosave.markSaved()
    }
    const waiting = offline.conflicts.find(c => c.recordId === r.id)
    if (waiting) autosave.raiseConflict(copyWork(work.value), waiting.theirs as RecordDto)
  }

  /** Conflict: this screen's copy goes over the other; the saves waiting on the phone are settled by it. */
  async function keepMine(): Promise<boolean> {
    if (record.value) await offline.settle(record.value.id)
    return autosave.keepMine()
  }

  /** Conflict: go on from the server's copy; this screen's is set aside, and the waiting saves with it. */
  async function takeTheirs() {
    if (record.value) await offline.settle(record.value.id)
    autosave.takeTheirs()
  }

  /** The verdict of every step, as typed now. */
  const readings = computed(() => judgeSteps(guideSteps.value, work.value.steps))
  const progress = computed(() => progressOf(guideSteps.value, work.value.steps))
  /** The step read last (this sitting, or by the stored reading times), whose change is shown. */
  const lastStep = ref<string | null>(null)
  /** Probabilities, the next step, where a flow stands: the same functions as the server, on every keystroke. */
  const reasoning = computed(() => {
    const r = record.value
    if (!r?.guide || !r.procedure) return null
    const done = Object.fromEntries(Object.entries(work.value.steps).map(([k, s]) => [k, s.done]))
    return reasonAbout({ procedureSlug: r.procedure.slug, content: r.guide.content, reasoning: r.reasoning, readings: readings.value, done, lastStep: lastStep.value })
  })

  /**
   * Types a reading: a readable one marks the step done, one that cannot be read (or is asked
   * about) leaves it not done, and clearing it undoes the mark.
   */
  function setReading(key: string, value: string) {
    const step = guide.value?.content.steps.find(s => s.key === key)
    const entry = stepWork(key)
    entry.value = value
    if (!step) return
    const done = doneByReading(judgeStep(step, value))
    entry.done = done ?? false
    if (done) lastStep.value = key
  }

  /** Whether the technician may mark a step done by hand: only while its reading says nothing. */
  function canMarkDone(key: string): boolean {
    return readings.value[key]?.state === 'empty' || readings.value[key] === undefined
  }

  function toggleDone(key: string) {
    if (canMarkDone(key)) stepWork(key).done = !stepWork(key).done
  }

  /** Takes the flow's conclusion into the close form: its cause, or passing the job on. */
  function acceptConclusion() {
    const c = reasoning.value?.concluded
    if (!c) return
    const close = work.value.close
    if (c.id) {
      close.cause = c.id
      if (close.outcome === 'no_fault_found') close.outcome = ''
    }
    else {
      close.outcome = 'escalated'
      if (close.cause === '' || close.cause === NO_FAULT) close.cause = UNCONFIRMED
    }
  }

  function load(next: RecordDto) {
    record.value = next
    work.value = workFromRecord(next)
    autosave.loaded({ version: next.version })
    // The last reading stored is the one whose change is shown after a reload.
    const read = Object.entries(next.steps ?? {}).filter(([, e]) => e.verdict && e.readAt).sort((a, b) => b[1].readAt!.localeCompare(a[1].readAt!))
    lastStep.value = read[0]?.[0] ?? null
    if (offline.ready) takeUpKept()
  }

  /**
   * Last-chance save when the page goes away (tab closed, phone locked): a keepalive request
   * outlives the page, where an ordinary one would be cancelled with it.
   */
  function saveOnLeave() {
    const r = record.value
    if (!r || !dirty.value || conflict.value || !editable.value) return
    // No connection, or saves waiting in line: this one joins them on the phone.
    if (!offline.online || offline.mustQueue(r.id)) {
      offline.keepOnLeave({ recordId: r.id, body: workBody(work.value), baseVersion: version.value, work: copyWork(work.value) })
      void save()
      return
    }
    if (autosave.busy()) return
    autosave.cancelPending()
    void fetch(`/api/records/${r.id}`, {
      method: 'PATCH',
      keepalive: true,
      credentials: 'same-origin',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ version: version.value, ...workBody(work.value) }),
    }).then(async (res) => {
      if (!res.ok) return
      const answer = await res.json() as { record: RecordDto }
      record.value = answer.record
      version.value = answer.record.version
      autosave.markSaved()
    }).catch(() => undefined)
  }

  function stepWork(key: string): StepWork {
    return (work.value.steps[key] ??= emptyStepWork())
  }

  function openRecord(): RecordDto {
    if (!record.value) throw new Error('no record is open')
    return record.value
  }

  async function close(payload: Record<string, unknown>): Promise<RecordDto> {
    const r = openRecord()
    if (!offline.online) throw Object.assign(new Error('offline'), { data: { message: 'Closing needs a connection. What you chose is kept on this phone; close the record when the connection is back.' } })
    // Readings typed just before closing must be in the record the close is judged on, the
    // ones kept on the phone included.
    if (offline.mustQueue(r.id)) await offline.sync()
    if (offline.mustQueue(r.id)) throw Object.assign(new Error('unsaved'), { data: { message: 'Readings typed with no connection are not sent yet; close the record once they are.' } })
    if (!(await flush())) throw Object.assign(new Error('unsaved'), { data: { message: 'The latest readings are not saved yet; save them before closing.' } })
    const res = await $fetch(`/api/records/${r.id}/close`, { method: 'POST', body: payload })
    load(res.record)
    return res.record
  }

  async function amend(payload: { reason: string, changes: Record<string, unknown> }): Promise<RecordDto> {
    const res = await $fetch(`/api/records/${openRecord().id}/amendments`, { method: 'POST', body: payload })
    load(res.record)
    return res.record
  }

  return {
    record, version, work, saving, failure, savedAt, conflict, setAside,
    open, editable, guide, dirty, status, readings, progress, reasoning, lastStep,
    load, save, flush, saveOnLeave, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    stepWork, setReading, canMarkDone, toggleDone, acceptConclusion, close, amend,
  }
})
