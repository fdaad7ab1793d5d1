import { describe, expect, it } from 'vitest'
import { DEMO, signedIn } from '../helpers/api'

// The procedures library: newest live first unless asked otherwise, by title, or grouped by
// device type (device type names in alphabetical order, the chosen order inside each group).

interface Row { slug: string, title: string, deviceType: { slug: string, name: string }, publishedAt: string }

const collator = new Intl.Collator('en', { sensitivity: 'base' })
const byTitle = (a: Row, b: Row) => collator.compare(a.title, b.title)

async function all(query: string): Promise<Row[]> {
  const tech = await signedIn(DEMO.technician)
  const res = await tech.get(`/api/procedures?pageSize=100${query}`)
  expect(res.status).toBe(200)
  expect(res.body.data.length).toBeGreaterThan(3)
  return res.body.data as Row[]
}

describe('procedures library order', () => {
  it('lists the newest live revision first by default', async () => {
    const rows = await all('')
    const dates = rows.map(r => r.publishedAt)
    expect(dates).toEqual([...dates].sort().reverse())
  })

  it('sorts by title', async () => {
    const rows = await all('&sort=title')
    expect(rows.map(r => r.title)).toEqual([...rows].sort(byTitle).map(r => r.title))
  })

  it('groups by device type, titles in order inside each group', async () => {
    const rows = await all('&group=device&sort=title')
    const names = rows.map(r => r.deviceType.name)
    // Each device type forms one run, and the runs come in alphabetical order.
    const runs = names.filter((n, i) => i === 0 || names[i - 1] !== n)
    expect(new Set(runs).size).toBe(runs.length)
    expect(runs).toEqual([...runs].sort(collator.compare))
    expect(runs.length).toBeGreaterThan(1)
    for (const name of runs) {
      const inGroup = rows.filter(r => r.deviceType.name === name)
      expect(inGroup.map(r => r.title)).toEqual([...inGroup].sort(byTitle).map(r => r.title))
    }
  })

  it('groups by device type, newest first inside each group', async () => {
    const rows = await all('&group=device')
    for (const name of new Set(rows.map(r => r.deviceType.name))) {
      const dates = rows.filter(r => r.deviceType.name === name).map(r => r.publishedAt)
      expect(dates).toEqual([...dates].sort().reverse())
    }
  })

  it.each([
    { query: 'sort=colour', field: 'sort' },
    { query: 'group=symptom', field: 'group' },
  ])('refuses $query with 400 naming the field', async ({ query, field }) => {
    const tech = await signedIn(DEMO.technician)
    const res = await tech.get(`/api/procedures?${query}`)
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields)).toContain(field)
  })
})
