import { describe, expect, it } from 'vitest'
import { DEMO_DEVICE_TYPES, DEMO_PROCEDURES, DEMO_SYMPTOMS } from '../../scripts/seed/demo-content'
import { markdownToText, toSearchDocument } from '../../server/services/search/document'
import { ProcedureSearchIndex } from '../../server/services/search/engine'
import { toIndexTerm, tokenizeWords } from '../../server/services/search/query'
import type { SearchDocument, SearchVocabulary } from '../../server/services/search/types'

// Relevance on the demo library, searched the way a technician types at the bench. Each
// query's expected procedures follow from what the procedures are about (their symptoms,
// device and title), decided by reading them, not by running the search.

const vocabulary: SearchVocabulary = {
  symptoms: DEMO_SYMPTOMS.map(s => ({ slug: s.slug, name: s.name, synonyms: s.synonyms })),
  deviceTypes: DEMO_DEVICE_TYPES.map(d => ({ slug: d.slug, name: d.name })),
}

const idOf = new Map(DEMO_PROCEDURES.map((p, i) => [p.slug, i + 1]))
const slugOf = new Map(DEMO_PROCEDURES.map((p, i) => [i + 1, p.slug]))
const published = (p: (typeof DEMO_PROCEDURES)[number]) => p.revisions.find(r => r.state === 'published')
const DAY = 86_400_000
const NOW = Date.UTC(2026, 0, 15)

const DEMO_DOCS: SearchDocument[] = DEMO_PROCEDURES.flatMap((p) => {
  const rev = published(p)
  return rev ? [toSearchDocument(idOf.get(p.slug)!, p.slug, rev.content, vocabulary, new Date(NOW - rev.daysAgo * DAY).toISOString())] : []
})

/** As the server will: the published revision of every procedure that has one, then retirements. */
function buildDemoIndex(): ProcedureSearchIndex {
  const index = new ProcedureSearchIndex(vocabulary)
  index.build(DEMO_DOCS)
  for (const p of DEMO_PROCEDURES) if (p.retired) index.discard(idOf.get(p.slug)!)
  return index
}

const RETIRED = DEMO_PROCEDURES.filter(p => p.retired).map(p => p.slug)
const UNPUBLISHED = DEMO_PROCEDURES.filter(p => !published(p)).map(p => p.slug)

type Labelled = { q: string, expect: string[], kind: 'plain' | 'typo' | 'synonym' | 'partial' | 'contraction' | 'model' }
const QUERIES: Labelled[] = [
  // Does not dim: the VR-240 stuck at full, and the half-cycle procedure, which lists it too.
  { q: 'wont dim', expect: ['vr240-stuck-at-full', 'vr240-half-cycle-flicker'], kind: 'contraction' },
  { q: 'won\'t dim', expect: ['vr240-stuck-at-full', 'vr240-half-cycle-flicker'], kind: 'contraction' },
  { q: 'dimmer doesnt dim', expect: ['vr240-stuck-at-full', 'vr240-half-cycle-flicker'], kind: 'contraction' },
  { q: 'stuck at full brightness', expect: ['vr240-stuck-at-full', 'vr240-half-cycle-flicker'], kind: 'synonym' },
  { q: 'vr240 stuck on full', expect: ['vr240-stuck-at-full'], kind: 'model' },
  { q: 'VR-240 knob does nothing', expect: ['vr240-stuck-at-full'], kind: 'model' },
  // Flickers on one half-cycle.
  { q: 'flicker half', expect: ['vr240-half-cycle-flicker', 'cc350-flicker-when-dimmed'], kind: 'synonym' },
  { q: '50 hz flicker', expect: ['vr240-half-cycle-flicker', 'cc350-flicker-when-dimmed'], kind: 'synonym' },
  { q: 'flikers on one half cycle', expect: ['vr240-half-cycle-flicker', 'cc350-flicker-when-dimmed'], kind: 'typo' },
  { q: 'rotary dimmer beats at 50hz', expect: ['vr240-half-cycle-flicker'], kind: 'plain' },
  // LED lamp glows when off.
  { q: 'glows when off', expect: ['vr240-glows-when-off'], kind: 'plain' },
  { q: 'ghosting', expect: ['vr240-glows-when-off'], kind: 'synonym' },
  { q: 'led lamps flash when switched off', expect: ['vr240-glows-when-off'], kind: 'plain' },
  { q: 'afterglow leds', expect: ['vr240-glows-when-off'], kind: 'synonym' },
  // Dead, no output.
  { q: 'dead no output', expect: ['pd400-dead-after-lamp-failure', 'cc350-dead', 'px10-no-detection'], kind: 'plain' },
  { q: 'pd400 dead', expect: ['pd400-dead-after-lamp-failure'], kind: 'model' },
  { q: 'push dimmer not working after lamp blew', expect: ['pd400-dead-after-lamp-failure'], kind: 'contraction' },
  { q: 'cc350 dead no light', expect: ['cc350-dead'], kind: 'model' },
  { q: 'led driver dead leds dont light', expect: ['cc350-dead'], kind: 'contraction' },
  // Buzzes when dimmed low.
  { q: 'buzz when dimmed low', expect: ['pd400-buzzes-low'], kind: 'synonym' },
  { q: 'dimmer humming', expect: ['pd400-buzzes-low'], kind: 'synonym' },
  { q: 'buzzes at low setting', expect: ['pd400-buzzes-low'], kind: 'plain' },
  { q: 'singing noise leading edge dimmer', expect: ['pd400-buzzes-low'], kind: 'synonym' },
  { q: 'buzing dimmer', expect: ['pd400-buzzes-low'], kind: 'typo' },
  // Burning smell / scorch marks (the PD-400 and the CV24 supply).
  { q: 'scorch marks', expect: ['pd400-scorch-marks', 'cv24-trips-rcd'], kind: 'plain' },
  { q: 'smell of burning dimmer', expect: ['pd400-scorch-marks'], kind: 'plain' },
  { q: 'burnt smell pd-400', expect: ['pd400-scorch-marks'], kind: 'model' },
  { q: 'melted terminal', expect: ['pd400-scorch-marks', 'cv24-trips-rcd'], kind: 'synonym' },
  // Lamp flickers at low setting.
  { q: 'flickers when dimmed low', expect: ['cc350-flicker-when-dimmed'], kind: 'plain' },
  { q: 'strobing at minimum', expect: ['cc350-flicker-when-dimmed'], kind: 'synonym' },
  { q: 'cc350 flickr', expect: ['cc350-flicker-when-dimmed'], kind: 'typo' },
  // Output voltage low.
  { q: 'output voltage low', expect: ['cv24-output-low'], kind: 'plain' },
  { q: '24v supply sagging under load', expect: ['cv24-output-low'], kind: 'synonym' },
  { q: 'led strip dim cv24', expect: ['cv24-output-low'], kind: 'model' },
  // Trips the breaker / RCD.
  { q: 'trips rcd', expect: ['cv24-trips-rcd'], kind: 'synonym' },
  { q: 'keeps tripping the breaker', expect: ['cv24-trips-rcd'], kind: 'plain' },
  { q: 'earth leakage trip led supply', expect: ['cv24-trips-rcd'], kind: 'synonym' },
  { q: 'trips the electrics', expect: ['cv24-trips-rcd'], kind: 'synonym' },
  // Stays on; switches on by itself.
  { q: 'pir stays on', expect: ['px10-stays-on'], kind: 'plain' },
  { q: 'lights stay on after time out', expect: ['px10-stays-on'], kind: 'synonym' },
  { q: 'won\'t switch off', expect: ['px10-stays-on'], kind: 'contraction' },
  { q: 'comes on at night by itself', expect: ['px10-stays-on'], kind: 'synonym' },
  // Does not detect motion.
  { q: 'pir not triggering', expect: ['px10-no-detection'], kind: 'synonym' },
  { q: 'doesnt detect motion', expect: ['px10-no-detection'], kind: 'contraction' },
  { q: 'px10 ignores movement', expect: ['px10-no-detection'], kind: 'model' },
  // Charger hiccup.
  { q: 'charger hiccup', expect: ['qc30-hiccup'], kind: 'plain' },
  { q: 'usb c charger restarts in a loop', expect: ['qc30-hiccup'], kind: 'plain' },
  { q: 'qc30 output comes and goes', expect: ['qc30-hiccup'], kind: 'model' },
  { q: 'charger ticking', expect: ['qc30-hiccup'], kind: 'synonym' },
  // Charges slowly / stays at 5 V.
  { q: 'charges slowly', expect: ['qc30-stays-at-5v'], kind: 'plain' },
  { q: 'stuck at 5v no fast charge', expect: ['qc30-stays-at-5v'], kind: 'synonym' },
  { q: 'slow chargng', expect: ['qc30-stays-at-5v'], kind: 'typo' },
  { q: 'no pd on usb-c charger', expect: ['qc30-stays-at-5v'], kind: 'synonym' },
  // Runs hot (published: the PD-400 scorch procedure and the CV24 supply).
  { q: 'runs hot', expect: ['pd400-scorch-marks', 'cv24-output-low'], kind: 'plain' },
  { q: 'too hot to touch', expect: ['pd400-scorch-marks', 'cv24-output-low'], kind: 'synonym' },
  // Still being typed: the last word is a prefix.
  { q: 'glows when of', expect: ['vr240-glows-when-off'], kind: 'partial' },
  { q: 'charger hicc', expect: ['qc30-hiccup'], kind: 'partial' },
  { q: 'pir not trigg', expect: ['px10-no-detection'], kind: 'partial' },
  { q: 'trips the rc', expect: ['cv24-trips-rcd'], kind: 'partial' },
  { q: 'buzz when dimm', expect: ['pd400-buzzes-low'], kind: 'partial' },
  { q: 'scorch mar', expect: ['pd400-scorch-marks', 'cv24-trips-rcd'], kind: 'partial' },
  { q: 'output voltage lo', expect: ['cv24-output-low'], kind: 'partial' },
]

describe('search relevance on the demo library', () => {
  const index = buildDemoIndex()
  const rows = QUERIES.map((lq) => {
    const hits = index.search({ q: lq.q, limit: 20 }).hits.map(h => slugOf.get(h.id)!)
    const rank = hits.findIndex(s => lq.expect.includes(s))
    const recall5 = lq.expect.filter(s => hits.slice(0, 5).includes(s)).length / lq.expect.length
    return { ...lq, hits, rank, recall5 }
  })
  const report = (): string =>
    rows
      .filter(r => r.rank !== 0 || r.recall5 < 1)
      .map(r => `  [${r.kind}] "${r.q}": first relevant at ${r.rank < 0 ? '>20' : r.rank + 1}, recall@5 ${r.recall5.toFixed(2)}; top: ${r.hits.slice(0, 5).join(', ')}`)
      .join('\n')

  it('has a labelled set of technician phrasings', () => {
    expect(QUERIES.length).toBeGreaterThanOrEqual(40)
    for (const lq of QUERIES) for (const s of lq.expect) expect(idOf.has(s), s).toBe(true)
    for (const kind of ['typo', 'synonym', 'partial', 'contraction'] as const) expect(QUERIES.filter(q => q.kind === kind).length).toBeGreaterThanOrEqual(4)
  })

  it('ranks the right procedure first: MRR ≥ 0.85, recall@5 ≥ 0.95', () => {
    const mrr = rows.reduce((sum, r) => sum + (r.rank >= 0 ? 1 / (r.rank + 1) : 0), 0) / rows.length
    const recall5 = rows.reduce((sum, r) => sum + r.recall5, 0) / rows.length
    expect(mrr, `MRR ${mrr.toFixed(3)}\n${report()}`).toBeGreaterThanOrEqual(0.85)
    expect(recall5, `recall@5 ${recall5.toFixed(3)}\n${report()}`).toBeGreaterThanOrEqual(0.95)
  })

  it('never shows a retired or unpublished procedure', () => {
    expect(RETIRED).toContain('pd250-stuck-at-full')
    expect(UNPUBLISHED).toContain('vr240-runs-hot')
    const hidden = new Set([...RETIRED, ...UNPUBLISHED])
    // Their own words, to tempt the index, as well as every labelled query.
    for (const q of ['pd250 stuck at full', 'PD-250', 'vr240 faceplate hot scorched', 'runs hot', ...QUERIES.map(x => x.q)]) {
      for (const h of index.search({ q, limit: 100 }).hits) expect(hidden.has(slugOf.get(h.id)!), `${q} → ${slugOf.get(h.id)}`).toBe(false)
    }
    expect(index.search({ q: '', deviceType: 'push-dimmer-leading-edge', limit: 100 }).hits.map(h => h.slug).sort()).toEqual(['pd400-buzzes-low', 'pd400-dead-after-lamp-failure', 'pd400-scorch-marks'])
  })
})

describe('words that carry no symptom', () => {
  const index = buildDemoIndex()
  const slugs = (q: string): string[] => index.search({ q, limit: 100 }).hits.map(h => h.slug)

  it.each(['nothing', 'not', 'no', 'never', 'it does not', 'it does not ', 'zzqx nothing', 'nothing zzqx '])('"%s" finds nothing', (q) => {
    expect(slugs(q)).toEqual([])
  })

  // Every word of a procedure as the index reads it, the synonyms of its symptoms included.
  const wordsOf = (slug: string): Set<string> => {
    const d = DEMO_DOCS.find(x => x.slug === slug)!
    const synonyms = d.symptoms.flatMap(s => vocabulary.symptoms.find(v => v.slug === s.slug)?.synonyms ?? [])
    const text = [d.title, d.text, d.deviceType.name, ...d.causes.map(c => c.name), ...d.stepTitles, ...d.symptoms.map(s => s.name), ...synonyms].join(' ')
    return new Set(tokenizeWords(text).map(w => toIndexTerm(w)).filter((t): t is string => t !== null))
  }

  it.each(['doesnt dim', 'doesnt dim ', 'does not dim', 'won\'t dim', 'no dimming'])('"%s" lists the no-dimming procedures first, and nothing that only says "no" or "not"', (q) => {
    const hits = slugs(q)
    expect(hits.slice(0, 2).sort()).toEqual(['vr240-half-cycle-flicker', 'vr240-stuck-at-full'])
    // The demo's "Does not dim" procedures (by reading them); every other hit must be about dimming.
    for (const slug of hits.slice(2)) expect(wordsOf(slug).has('dim'), `${q} → ${slug}`).toBe(true)
  })
})

describe('model and part codes', () => {
  const index = buildDemoIndex()
  const slugs = (q: string): string[] => index.search({ q, limit: 100 }).hits.map(h => h.slug)
  // The published procedures whose title or "applies to" names the model, by reading them.
  const namedIn = (pattern: RegExp): string[] => DEMO_PROCEDURES
    .filter(p => !p.retired && published(p) && pattern.test([published(p)!.content.title, ...published(p)!.content.appliesTo].join(' | ')))
    .map(p => p.slug)
    .sort()

  it.each([
    { q: 'vr-240 dead', model: /VR-240/ },
    { q: 'VR240 dead', model: /VR-240/ },
    { q: 'dead vr-240 ', model: /VR-240/ },
    { q: 'pd-400 flickers', model: /PD-400/ },
    { q: 'px10 dead', model: /PX-10/ },
    { q: 'qc30 runs hot', model: /QC30/ },
  ])('$q: the procedures for that model come before any other', ({ q, model }) => {
    const expected = namedIn(model)
    expect(expected.length).toBeGreaterThanOrEqual(2)
    expect(slugs(q).slice(0, expected.length).sort(), q).toEqual(expected)
  })

  it('marks the model in the title, however the hyphen was typed', () => {
    for (const q of ['vr240 dead', 'vr-240 dead']) {
      const hit = index.search({ q }).hits.find(h => h.slug === 'vr240-glows-when-off')!
      const title = hit.highlights.find(h => h.field === 'title')!
      expect(title.snippet.filter(p => p.match).map(p => p.text).join(' '), q).toMatch(/^VR-240$|^VR 240$/)
    }
  })
})

describe('toSearchDocument', () => {
  it('turns a revision into plain text, names from the vocabulary', () => {
    const p = DEMO_PROCEDURES.find(x => x.slug === 'vr240-stuck-at-full')!
    const d = toSearchDocument(7, p.slug, published(p)!.content, vocabulary, '2025-06-01T00:00:00.000Z')
    expect(d).toMatchObject({ id: 7, slug: 'vr240-stuck-at-full', deviceType: { slug: 'rotary-led-dimmer-trailing-edge', name: '2-wire rotary LED dimmer (trailing edge)' }, publishedAt: '2025-06-01T00:00:00.000Z' })
    expect(d.symptoms).toEqual([{ slug: 'does-not-dim', name: 'Does not dim' }])
    expect(d.text).not.toMatch(/\*\*|__|^#+ |\]\(/m)
    expect(d.text.split(/\s+/).length).toBeGreaterThan(200)
  })

  it('strips Markdown to its words', () => {
    const md = '# Heading\n\nSome **bold** and _italic_ text with `code`, a [link](https://example.org) and ![alt words](x.png).\n\n- item one\n- item <b>two</b>\n\n<div>raw block</div>\n\n```\nfenced 325 V\n```\n\nA &amp; B'
    expect(markdownToText(md)).toBe('Heading\nSome bold and italic text with code, a link and alt words.\nitem one\nitem two\nfenced 325 V\nA & B')
  })
})
