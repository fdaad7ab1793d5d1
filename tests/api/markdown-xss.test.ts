import { describe, expect, it } from 'vitest'
import { DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { assertSafeHtml, XSS_VECTORS } from '../helpers/xss'

describe('Markdown is rendered safely in every field', () => {
  it.each(XSS_VECTORS.map(v => [v]))('%s', async (vector) => {
    const author = await signedIn(DEMO.author)
    const content = makeContent({
      summary: vector,
      fix: vector,
      verification: vector,
      causes: [{ key: 'c1', name: `cause ${vector}`.slice(0, 150), detail: vector, prior: 0.5 }],
      steps: [{ key: 's1', title: `step ${vector}`.slice(0, 150), instruction: vector, failPointsTo: ['c1'] }],
    })
    const created = await author.post('/api/procedures', { content })
    expect(created.status).toBe(201)
    const detail = (await author.get(`/api/revisions/${created.body.revision.id}`)).body
    for (const html of [detail.rendered.summary, detail.rendered.fix, detail.rendered.verification, detail.rendered.causes.c1, detail.rendered.steps.s1]) {
      assertSafeHtml(html)
    }
  })
})
