import { describe, expect, it } from 'vitest'
import { DEMO, signedIn } from '../helpers/api'

// The demo vocabulary (scripts/seed/demo-content.ts): "Flickers on one half-cycle" and "Lamp
// flickers at low setting" are the flicker symptoms; "Does not dim" has the synonym "stuck at
// full brightness".
type Match = { symptom: { slug: string, name: string }, via: string | null }
const slugs = (body: { data: Match[] }) => body.data.map(m => m.symptom.slug)

describe('GET /api/symptoms/match: the editor\'s symptom picker', () => {
  it('finds symptoms through typos and negations typed any way, as search does', async () => {
    const author = await signedIn(DEMO.author)
    const ask = async (q: string) => {
      const res = await author.get(`/api/symptoms/match?q=${encodeURIComponent(q)}`)
      expect(res.status, q).toBe(200)
      return res.body as { data: Match[] }
    }
    expect(slugs(await ask('flikker')).slice(0, 2).sort()).toEqual(['flickers-one-half-cycle', 'lamp-flickers-low'])
    for (const q of ['doesnt dim', 'doesn\'t dim', 'does not dim', 'wont dim']) expect(slugs(await ask(q))[0], q).toBe('does-not-dim')
    const bySynonym = (await ask('stuk at full brightnes')).data[0]!
    expect(bySynonym.symptom.slug).toBe('does-not-dim')
    expect(bySynonym.via).toBe('stuck at full brightness')
    // A fragment is still found inside a name, as before typing a whole word.
    expect(slugs(await ask('fl'))).toEqual(expect.arrayContaining(['flickers-one-half-cycle', 'lamp-flickers-low']))
    expect((await ask('zzqx')).data).toEqual([])
  })

  it('names the field it refuses', async () => {
    const author = await signedIn(DEMO.author)
    const res = await author.get(`/api/symptoms/match?q=${'a'.repeat(201)}`)
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toHaveProperty('q')
  })
})
