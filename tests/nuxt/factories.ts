import { makeContent } from '../helpers/content'
import { RevisionContent } from '#shared/types/procedure'
import type { RevisionDetailDto } from '#shared/types/procedure-api'
import type { EvidenceCauseDto, RecordDto } from '#shared/types/records'

// Invented bench data for component tests: a three-step guide on a trailing-edge dimmer.

/** The test procedure of tests/helpers/content.ts, with a third cause and a step that takes no reading. */
export function mockGuideContent(overrides: Partial<RevisionContent> = {}): RevisionContent {
  const base = makeContent({ title: 'Dimmer stays dark', parts: [] })
  const content = RevisionContent.parse({
    ...base,
    causes: [...base.causes ?? [], { key: 'dry-cap', name: 'Dried-out supply capacitor', detail: '', prior: 0.1 }],
    steps: [...base.steps ?? [], { key: 'look', title: 'Look for bulging capacitors', instruction: 'Under a bright lamp, tops and bases.' }],
  })
  // Overrides may make it incomplete on purpose (a draft not ready for review).
  return { ...content, ...overrides }
}

/**
 * The same guide as a branching procedure: the body diode decides first (low confirms the
 * MOSFET, in range goes on to the potentiometer), the potentiometer next (out of range confirms
 * it), then a look at the capacitors (a fail confirms them, a pass hands the job on).
 */
export function mockFlowContent(): RevisionContent {
  const c = mockGuideContent()
  const [diode, pot, look] = c.steps
  return RevisionContent.parse({
    ...c,
    steps: [
      { ...diode, verdicts: { low: { conclude: 'shorted-fet' }, high: { causes: ['shorted-fet'] }, open: { causes: ['shorted-fet'], next: 'look' }, in_range: { next: 'pot' } }, minutes: 3 },
      { ...pot, verdicts: { low: { conclude: 'open-pot' }, high: { conclude: 'open-pot' }, open: { conclude: 'open-pot' }, in_range: { next: 'look' } }, minutes: 6 },
      { ...look, verdicts: { fail: { conclude: 'dry-cap' }, pass: { conclude: 'escalate' } }, minutes: 2 },
    ],
  })
}

export function mockRecord(overrides: Partial<RecordDto> = {}): RecordDto {
  const content = mockGuideContent()
  return {
    id: 7,
    status: 'in_progress',
    procedure: { id: 3, slug: 'dimmer-stays-dark', title: content.title },
    revision: { id: 11, number: 2 },
    deviceType: { slug: content.deviceType, name: 'Rotary LED dimmer' },
    symptoms: [{ slug: 'does-not-dim', name: 'Does not dim' }],
    unit: { model: 'RD-200', serial: '', jobRef: '' },
    technician: { id: 4, name: 'Ana' },
    steps: {},
    notes: '',
    raised: [],
    confirmedCause: null,
    outcome: null,
    parts: [],
    partsCost: 0,
    minutes: null,
    replacementCost: null,
    photos: [],
    comeback: false,
    version: 3,
    startedAt: '2026-11-02T09:00:00.000Z',
    closedAt: null,
    amendments: [],
    candidates: content.causes.map(c => ({ id: `dimmer-stays-dark:${c.key}`, label: c.name, procedureSlug: 'dimmer-stays-dark' })),
    guide: { content, rendered: { summary: '', fix: '', verification: '', causes: {}, steps: {} }, attachments: {} },
    can: { edit: true, close: true, amend: false },
    closeDraft: null,
    reasoning: null,
    ...overrides,
  }
}

export function mockEvidence(causeKey: string, posterior: number, overrides: Partial<EvidenceCauseDto> = {}): EvidenceCauseDto {
  return { id: `dimmer-stays-dark:${causeKey}`, procedureSlug: 'dimmer-stays-dark', causeKey, label: causeKey, posterior, confirmed: 1, of: 4, support: `found in 1 of 4 closed jobs`, ...overrides }
}

export function mockRevision(overrides: Partial<RevisionDetailDto> = {}): RevisionDetailDto {
  const content = mockGuideContent()
  return {
    id: 41, procedureId: 7, procedureSlug: 'dimmer-stays-dark', number: null, state: 'draft', title: content.title,
    author: { id: 3, name: 'Tomasz' }, reviewer: null, changeNote: '', baseRevisionId: null, version: 4,
    createdAt: '2026-11-01T10:00:00.000Z', updatedAt: '2026-11-01T10:00:00.000Z', submittedAt: null, decidedAt: null, publishedAt: null,
    content,
    rendered: { summary: '', fix: '', verification: '', causes: {}, steps: {} },
    comments: [], attachments: {}, labels: { deviceType: null, symptoms: [] },
    procedure: { id: 7, slug: 'dimmer-stays-dark', status: 'active', publishedRevisionId: null },
    can: { edit: true, submit: true, review: false, comment: false, startDraft: false },
    ...overrides,
  }
}

/** An API error as $fetch throws it: the status, and the body the server's error handler writes. */
export function apiError(statusCode: number | undefined, message: string, data?: Record<string, unknown>) {
  return Object.assign(new Error(message), { statusCode, data: statusCode === undefined ? undefined : { statusCode, message, data } })
}

/** A stand-in for $fetch that answers each call from `answer` and keeps what was sent. */
export function fakeFetch(answer: (url: string, opts: { method?: string, body?: any }) => unknown) {
  const calls: Array<{ url: string, method: string, body: any }> = []
  const fn = async (url: string, opts: { method?: string, body?: any } = {}) => {
    calls.push({ url, method: opts.method ?? 'GET', body: structuredClone(opts.body) })
    return answer(url, opts)
  }
  return { calls, fn }
}
