import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { effectScope, nextTick, ref } from 'vue'
import { apiError } from './factories'
import { useAutosave } from '~/composables/useAutosave'

const DELAY = 500

interface Copy { text: string }
interface Saved { version: number, text: string }

/**
 * One form with a text field, autosaved to `server` (a stand-in holding the text and its version
 * the way the routes do): a stale version is refused with 409 and the current copy.
 */
function autosavedForm(opts: { enabled?: () => boolean } = {}) {
  const server = { version: 1, text: '', sends: 0, inFlight: 0, mostInFlight: 0, fail: null as Error | null, hold: null as Promise<void> | null }
  const text = ref('')
  const loaded: Saved[] = []
  const fieldErrors: Array<Record<string, string>> = []
  const scope = effectScope()
  const autosave = scope.run(() => useAutosave<Copy, Saved>({
    delayMs: DELAY,
    body: () => ({ text: text.value }),
    snapshot: () => ({ text: text.value }),
    enabled: opts.enabled,
    async send(body, version) {
      server.sends++
      server.inFlight++
      server.mostInFlight = Math.max(server.mostInFlight, server.inFlight)
      try {
        if (server.hold) await server.hold
        if (server.fail) throw server.fail
        if (version !== server.version) throw apiError(409, 'saved elsewhere', { current: { version: server.version, text: server.text } })
        server.text = (body as Copy).text
        return ++server.version
      }
      finally {
        server.inFlight--
      }
    },
    restore: mine => (text.value = mine.text),
    load(theirs) {
      loaded.push(theirs)
      text.value = theirs.text
      autosave.loaded({ version: theirs.version })
    },
    onFieldErrors: fields => fieldErrors.push(fields),
  }))!
  autosave.loaded({ version: 1 })
  return { server, text, autosave, loaded, fieldErrors, stop: () => scope.stop() }
}

async function type(form: ReturnType<typeof autosavedForm>, value: string) {
  form.text.value = value
  await nextTick()
}

describe('useAutosave, shared by the draft editor and the bench record', () => {
  beforeEach(() => vi.useFakeTimers())
  afterEach(() => vi.useRealTimers())

  it('saves once after a pause in typing, not on every keystroke', async () => {
    const form = autosavedForm()
    await type(form, 'Lamp')
    await vi.advanceTimersByTimeAsync(DELAY - 100)
    await type(form, 'Lamp flickers')
    await vi.advanceTimersByTimeAsync(DELAY - 100)
    expect(form.server.sends).toBe(0)
    expect(form.autosave.status.value).toBe('pending')
    await vi.advanceTimersByTimeAsync(200)
    expect(form.server.sends).toBe(1)
    expect(form.server.text).toBe('Lamp flickers')
    expect(form.autosave.version.value).toBe(2)
    expect(form.autosave.status.value).toBe('saved')
    form.stop()
  })

  it('loading is not an edit', async () => {
    const form = autosavedForm()
    form.text.value = 'from the server'
    form.autosave.loaded({ version: 5 })
    await nextTick()
    await vi.advanceTimersByTimeAsync(DELAY * 2)
    expect(form.server.sends).toBe(0)
    expect(form.autosave.dirty.value).toBe(false)
    form.stop()
  })

  it('never overlaps two saves: an edit made while one is in flight goes out once it has landed', async () => {
    const form = autosavedForm()
    let release!: () => void
    form.server.hold = new Promise(resolve => (release = resolve))
    await type(form, 'first')
    const first = form.autosave.save()
    await type(form, 'second')
    const second = form.autosave.save()
    expect(form.autosave.status.value).toBe('saving')
    form.server.hold = null
    release()
    expect(await first).toBe(true)
    expect(await second).toBe(true)
    expect(form.server.mostInFlight).toBe(1)
    expect(form.server.sends).toBe(2)
    expect(form.server.text).toBe('second')
    expect(await form.autosave.flush()).toBe(true)
    form.stop()
  })

  it('keeps both copies on a stale version; keeping mine saves it on the version saved elsewhere', async () => {
    const form = autosavedForm()
    Object.assign(form.server, { version: 2, text: 'saved elsewhere' })
    await type(form, 'typed here')
    expect(await form.autosave.save()).toBe(false)
    expect(form.autosave.status.value).toBe('conflict')
    expect(form.autosave.conflict.value).toEqual({ mine: { text: 'typed here' }, theirs: { version: 2, text: 'saved elsewhere' } })
    // Nothing more goes out while the user has not chosen.
    await type(form, 'typed here, and more')
    await vi.advanceTimersByTimeAsync(DELAY * 2)
    expect(form.server.sends).toBe(1)
    expect(await form.autosave.flush()).toBe(false)

    expect(await form.autosave.keepMine()).toBe(true)
    expect(form.server).toMatchObject({ version: 3, text: 'typed here' })
    expect(form.autosave.status.value).toBe('saved')
    form.stop()
  })

  it('taking the other copy sets mine aside; bringing it back makes it an edit to save', async () => {
    const form = autosavedForm()
    Object.assign(form.server, { version: 2, text: 'saved elsewhere' })
    await type(form, 'typed here')
    await form.autosave.save()
    form.autosave.takeTheirs()
    await nextTick()
    expect(form.loaded).toEqual([{ version: 2, text: 'saved elsewhere' }])
    expect(form.text.value).toBe('saved elsewhere')
    expect(form.autosave.setAside.value).toEqual({ text: 'typed here' })
    expect(form.autosave.status.value).toBe('saved')

    form.autosave.restoreSetAside()
    await nextTick()
    expect(form.autosave.setAside.value).toBeNull()
    await vi.advanceTimersByTimeAsync(DELAY)
    expect(form.server).toMatchObject({ version: 3, text: 'typed here' })
    form.stop()
  })

  it('on a refusal with field errors says why, and hands the fields to the form', async () => {
    const form = autosavedForm()
    form.server.fail = apiError(400, 'content.title: title must be at least 3 characters', { fields: { 'content.title': 'title must be at least 3 characters' } })
    await type(form, 'ab')
    expect(await form.autosave.save()).toBe(false)
    expect(form.autosave.status.value).toBe('failed')
    expect(form.autosave.failure.value).toBe('content.title: title must be at least 3 characters')
    expect(form.fieldErrors).toEqual([{ 'content.title': 'title must be at least 3 characters' }])
    form.server.fail = null
    expect(await form.autosave.save()).toBe(true)
    expect(form.autosave.failure.value).toBe('')
    form.stop()
  })

  it('does not save while the form may not be saved', async () => {
    const allowed = ref(false)
    const form = autosavedForm({ enabled: () => allowed.value })
    await type(form, 'read only')
    await vi.advanceTimersByTimeAsync(DELAY * 2)
    expect(form.server.sends).toBe(0)
    expect(await form.autosave.save()).toBe(false)
    allowed.value = true
    expect(await form.autosave.save()).toBe(true)
    form.stop()
  })
})
