import { createPinia, setActivePinia } from 'pinia'
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { nextTick } from 'vue'
import { CauseContent, DEFAULT_PRIOR, DraftContent, RevisionContent, RevisionSaveBody } from '#shared/types/procedure'
import type { RevisionDetailDto } from '#shared/types/procedure-api'
import { DEMO_PROCEDURES } from '~~/scripts/seed/demo-content'
import { SAVE_DELAY_MS, useProcedureDraftStore } from '~~/app/stores/procedureDraft'
import { keyFromName, readDraft } from '~~/app/utils/procedureDraft'

describe('keyFromName', () => {
  // Keys must pass the cause/step key rule of RevisionContent (a-z, 0-9, _ or -, at most 40).
  it.each([
    ['MOSFET Q1 shorted drain–source', [], 'mosfet_q1_shorted_drain_source'],
    ['Potentiometer RV1 track worn', [], 'potentiometer_rv1_track_worn'],
    ['Wójcik’s bridge', [], 'wojcik_s_bridge'],
    ['  C10/C11 high ESR  ', [], 'c10_c11_high_esr'],
    ['Bulk capacitor C3 lost capacitance after years in a hot ceiling void', [], 'bulk_capacitor_c3_lost_capacitan'],
    ['Bridge diode shorted', ['bridge_diode_shorted'], 'bridge_diode_shorted_2'],
    ['Bridge diode shorted', ['bridge_diode_shorted', 'bridge_diode_shorted_2'], 'bridge_diode_shorted_3'],
    ['—', [], 'cause_1'],
  ])('%s (taken: %j) → %s', (name, taken, expected) => {
    const key = keyFromName(name, taken, 'cause_1')
    expect(key).toBe(expected)
    expect(CauseContent.shape.key.safeParse(key).success).toBe(true)
  })
})

describe('the editor keeps a complete revision as it was', () => {
  // A property of the product, checked against its own schema: every revision of the demo workshop is a complete RevisionContent; passing it through the
  // editor's working copy and back must change nothing the schema keeps.
  const revisions = DEMO_PROCEDURES.flatMap(p => p.revisions.map((r, i) => ({ label: `${p.slug} #${i + 1}`, content: r.content })))
  it.each(revisions)('$label', ({ content }) => {
    const before = RevisionContent.parse(content)
    const after = RevisionContent.parse(readDraft(structuredClone(content)))
    expect(after).toEqual(before)
  })

  it('fills every list of an incomplete draft from the schema\'s defaults, so the form can bind to it', () => {
    const d = readDraft({ title: 'Half written', steps: [{ title: 'Look', measurement: { quantity: 'nonsense' } }], causes: [{ name: 'Q1' }] })
    expect(d.parts).toEqual([])
    expect(d.causes).toEqual([{ key: '', name: 'Q1', detail: '', prior: DEFAULT_PRIOR }])
    // A value that does not fit its field gives way to the field's default; the rest is kept.
    expect(d.steps[0]).toEqual({ key: '', title: 'Look', instruction: '', measurement: { quantity: 'dc_voltage', unit: '' } })
  })

  it.each([
    ['not an object', 'a string', { title: '', causes: [] }],
    ['a list that is not a list', { title: 'Kept', causes: 'none' }, { title: 'Kept', causes: [] }],
    ['an unknown hazard among known ones', { hazards: ['mains', 'lava', 'heat'] }, { hazards: ['mains', 'heat'] }],
    ['a prior that is not a number', { causes: [{ key: 'c1', prior: 'high' }] }, { causes: [{ key: 'c1', name: '', detail: '', prior: DEFAULT_PRIOR }] }],
  ])('reads a stored body with %s', (_label, raw, expected) => {
    expect(readDraft(raw)).toMatchObject(expected)
  })

  it('saves a draft only under a title, with the same rule a complete revision has', () => {
    const saved = RevisionSaveBody.safeParse({ version: 1, content: { title: 'ab' } })
    expect(saved.success).toBe(false)
    expect(saved.error?.issues[0]).toMatchObject({ path: ['content', 'title'], message: 'title must be at least 3 characters' })
    expect(RevisionSaveBody.safeParse({ version: 1, content: { title: 'Lamp flickers' } }).success).toBe(true)
  })

  it('states one default prior for a new cause and for a draft\'s cause saved without one', () => {
    expect(DraftContent.parse({ causes: [{ key: 'c1' }] }).causes[0]!.prior).toBe(DEFAULT_PRIOR)
  })
})

// A stand-in for the revision routes, holding one draft and its save counter the way the server
// does: a PUT with a stale counter answers 409 with the current revision.
function fakeRevisionServer(start: RevisionDetailDto) {
  const server = { detail: structuredClone(start), puts: 0 }
  const put = (body: { version: number, content: RevisionDetailDto['content'], changeNote?: string }) => {
    server.puts++
    if (body.version !== server.detail.version) {
      throw Object.assign(new Error('stale'), { statusCode: 409, data: { message: 'saved elsewhere', data: { current: structuredClone(server.detail) } } })
    }
    server.detail = { ...server.detail, version: server.detail.version + 1, content: structuredClone(body.content), changeNote: body.changeNote ?? server.detail.changeNote }
    return { revision: { id: server.detail.id, version: server.detail.version } }
  }
  const fetch = vi.fn(async (url: string, opts: { method?: string, body?: unknown } = {}) => {
    if (url === `/api/revisions/${server.detail.id}` && opts.method === 'PUT') return put(opts.body as Parameters<typeof put>[0])
    throw Object.assign(new Error(`unexpected ${opts.method} ${url}`), { statusCode: 500 })
  })
  return { server, put, fetch }
}

function mockRevision(overrides: Partial<RevisionDetailDto> = {}): RevisionDetailDto {
  const content = DEMO_PROCEDURES[0]!.revisions[0]!.content
  return {
    id: 41, procedureId: 7, procedureSlug: 'demo', number: null, state: 'draft', title: content.title,
    author: { id: 3, name: 'Tomasz' }, reviewer: null, changeNote: '', baseRevisionId: null, version: 4,
    createdAt: '2026-11-01T10:00:00.000Z', updatedAt: '2026-11-01T10:00:00.000Z', submittedAt: null, decidedAt: null, publishedAt: null,
    content: RevisionContent.parse(content),
    rendered: { summary: '', fix: '', verification: '', causes: {}, steps: {} },
    comments: [], attachments: {}, labels: { deviceType: null, symptoms: [] },
    procedure: { id: 7, slug: 'demo', status: 'active', publishedRevisionId: null },
    can: { edit: true, submit: true, review: false, comment: false, startDraft: false },
    ...overrides,
  }
}

async function settle() {
  await nextTick()
  await vi.advanceTimersByTimeAsync(SAVE_DELAY_MS + 10)
  await nextTick()
}

// The lost-update problem and its usual answer, a save counter checked on write (common
// practice; the same idea as HTTP's If-Match precondition, RFC 9110 §13.1.1): a stale save is
// refused, and the editor must then keep both versions until the author chooses.
describe('autosave and stale saves', () => {
  beforeEach(() => {
    setActivePinia(createPinia())
    vi.useFakeTimers()
  })
  afterEach(() => {
    vi.useRealTimers()
    vi.unstubAllGlobals()
  })

  it('waits for a pause in typing, then saves once with the current counter', async () => {
    const { server, fetch } = fakeRevisionServer(mockRevision())
    vi.stubGlobal('$fetch', fetch)
    const draft = useProcedureDraftStore()
    draft.load(mockRevision())
    expect(draft.status).toBe('saved')

    draft.content.title = 'Stuck at full'
    await nextTick()
    draft.content.title = 'Stuck at full brightness'
    await nextTick()
    expect(draft.status).toBe('pending')
    await vi.advanceTimersByTimeAsync(SAVE_DELAY_MS - 100)
    expect(server.puts).toBe(0)
    await settle()
    expect(server.puts).toBe(1)
    expect(server.detail.content.title).toBe('Stuck at full brightness')
    expect(draft.version).toBe(5)
    expect(draft.status).toBe('saved')
  })

  it('on a stale counter keeps both versions; keeping mine saves it on the new counter', async () => {
    const { server, put, fetch } = fakeRevisionServer(mockRevision())
    vi.stubGlobal('$fetch', fetch)
    const draft = useProcedureDraftStore()
    draft.load(mockRevision())

    // Another tab saves first.
    put({ version: 4, content: { ...server.detail.content, title: 'Saved in the other tab' } })
    draft.content.title = 'Typed in this tab'
    await settle()

    expect(draft.status).toBe('conflict')
    expect(draft.conflict?.mine.content.title).toBe('Typed in this tab')
    expect(draft.conflict?.theirs.content.title).toBe('Saved in the other tab')
    expect(draft.conflict?.theirs.version).toBe(5)
    // Nothing more is sent while the author has not chosen.
    draft.content.summary = 'more typing'
    await settle()
    expect(server.puts).toBe(2)

    expect(await draft.keepMine()).toBe(true)
    expect(server.detail.content.title).toBe('Typed in this tab')
    expect(server.detail.version).toBe(6)
    expect(draft.status).toBe('saved')
  })

  it('taking the other version sets mine aside, and it can be brought back', async () => {
    const { server, put, fetch } = fakeRevisionServer(mockRevision())
    vi.stubGlobal('$fetch', fetch)
    const draft = useProcedureDraftStore()
    draft.load(mockRevision())

    put({ version: 4, content: { ...server.detail.content, title: 'Saved in the other tab' } })
    draft.content.title = 'Typed in this tab'
    await settle()
    draft.takeTheirs()
    await nextTick()
    expect(draft.content.title).toBe('Saved in the other tab')
    expect(draft.setAside?.content.title).toBe('Typed in this tab')
    expect(draft.status).toBe('saved')

    draft.restoreSetAside()
    await settle()
    expect(server.detail.content.title).toBe('Typed in this tab')
    expect(draft.setAside).toBeNull()
  })

  it('a cause key follows its name while new, and steps that point to it follow too', async () => {
    vi.stubGlobal('$fetch', fakeRevisionServer(mockRevision()).fetch)
    const draft = useProcedureDraftStore()
    draft.load(mockRevision())
    const loadedKey = draft.content.causes[0]!.key
    draft.renameCause(0, 'Renamed cause')
    expect(draft.content.causes[0]!.key).toBe(loadedKey)

    draft.addCause()
    const i = draft.content.causes.length - 1
    const step = draft.content.steps[0]!
    step.verdicts = { ...step.verdicts, low: { causes: [draft.content.causes[i]!.key] }, high: { conclude: draft.content.causes[i]!.key } }
    draft.renameCause(i, 'Gate resistor R7 open')
    expect(draft.content.causes[i]!.key).toBe('gate_resistor_r7_open')
    expect(step.verdicts.low?.causes).toEqual(['gate_resistor_r7_open'])
    expect(step.verdicts.high?.conclude).toBe('gate_resistor_r7_open')

    draft.removeCause(i)
    expect(step.verdicts.low).toBeUndefined()
    expect(step.verdicts.high).toBeUndefined()
  })
})
