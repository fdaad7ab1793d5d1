import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import { useAutosave } from '../composables/useAutosave'
import {
  copyWork, emptyStepWork, emptyWork, judgeSteps, progressOf, raisedByReadings, rankLikelyCauses, workBody, workFromRecord,
  type BenchWork, type LikelyCause, type StepWork,
} from '../utils/benchWork'
import type { EvidenceCauseDto, RecordDto } from '#shared/types/records'

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
      const res = await $fetch(`/api/records/${record.value!.id}`, { method: 'PATCH', body: { version, ...(body as ReturnType<typeof workBody>) } })
      // The server's copy brings its own verdicts and raised causes; the working copy stays as
      // typed, because the technician may have gone on typing while the save was in flight.
      record.value = res.record
      return res.record.version
    },
    restore(mine, theirs) {
      if (theirs) record.value = theirs
      work.value = copyWork(mine)
    },
    load,
  })
  const { version, saving, failure, savedAt, conflict, setAside, dirty, status, save, flush, keepMine, takeTheirs, restoreSetAside, discardSetAside } = autosave

  /** Verdicts of every step that has a measurement, as typed now. */
  const readings = computed(() => judgeSteps(guideSteps.value, work.value.steps))
  const raised = computed(() => raisedByReadings(guideSteps.value, work.value.steps))
  const progress = computed(() => progressOf(guideSteps.value, work.value.steps))

  function likelyCauses(evidence: EvidenceCauseDto[] | null | undefined): LikelyCause[] {
    const r = record.value
    if (!r?.guide || !r.procedure) return []
    return rankLikelyCauses({ procedureSlug: r.procedure.slug, causes: r.guide.content.causes, evidence, raised: raised.value })
  }

  function load(next: RecordDto) {
    record.value = next
    work.value = workFromRecord(next)
    autosave.loaded({ version: next.version })
  }

  /**
   * Last-chance save when the page goes away (tab closed, phone locked): a keepalive request
   * outlives the page, where an ordinary one would be cancelled with it.
   */
  function saveOnLeave() {
    const r = record.value
    if (!r || !dirty.value || conflict.value || !editable.value || autosave.busy()) return
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
    // Readings typed just before closing must be in the record the close is judged on.
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
    open, editable, guide, dirty, status, readings, raised, progress,
    likelyCauses, load, save, flush, saveOnLeave, keepMine, takeTheirs, restoreSetAside, discardSetAside,
    stepWork, close, amend,
  }
})
