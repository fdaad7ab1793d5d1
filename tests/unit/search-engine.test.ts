import fc from 'fast-check'
import { beforeEach, describe, expect, it } from 'vitest'
import { ProcedureSearchIndex } from '../../server/services/search/engine'
import { buildHighlightPattern, highlightStems, stemWords } from '../../server/services/search/highlight'
import { HYPHENATED_CODE, QUERY_LIMITS, hyphenatedCodeSpans, joinedCodes, modelCodes, parseQuery, stemWord, toIndexTerm } from '../../server/services/search/query'
import { EVIDENCE_WEIGHT } from '../../server/services/search/ranking'
import { SEARCH_LIMITS, type SearchDocument, type SearchHit, type SearchVocabulary } from '../../server/services/search/types'

// A small hand-written library. Expected results below follow from what each document says
// (by construction), never from running the engine.
const vocabulary: SearchVocabulary = {
  symptoms: [
    { slug: 'flicker', name: 'Flickers', synonyms: ['strobing', 'blinking'] },
    { slug: 'does-not-dim', name: 'Does not dim', synonyms: ['stuck at full brightness'] },
    { slug: 'hum-noise', name: 'Hums', synonyms: ['buzz', 'buzzing', 'mains hum'] },
    { slug: 'no-output', name: 'No output', synonyms: ['dead', 'nothing on the output'] },
    { slug: 'ghosting', name: 'Ghosting when off', synonyms: ['ghosting', 'glows when switched off'] },
    { slug: 'overheats', name: 'Overheats', synonyms: ['runs hot'] },
    { slug: 'trips-breaker', name: 'Trips the breaker', synonyms: ['trips the RCD'] },
  ],
  deviceTypes: [
    { slug: 'trailing-edge-dimmer', name: 'Trailing-edge dimmer' },
    { slug: 'leading-edge-dimmer', name: 'Leading-edge dimmer' },
    { slug: 'led-driver', name: 'LED driver' },
    { slug: 'usb-charger', name: 'USB charger' },
    { slug: 'led-panel', name: 'LED panel' },
    { slug: 'atx-psu', name: 'ATX power supply' },
    { slug: 'rotary-dimmer', name: 'Rotary dimmer' },
  ],
}
const symptomName = (slug: string): string => vocabulary.symptoms.find(s => s.slug === slug)!.name
const deviceName = (slug: string): string => vocabulary.deviceTypes.find(d => d.slug === slug)!.name

function doc(id: number, p: { device: string, symptoms: string[], title: string, text: string, hazards?: string[], causes?: string[], steps?: string[], publishedAt?: string }): SearchDocument {
  return {
    id,
    slug: `proc-${id}`,
    title: p.title,
    deviceType: { slug: p.device, name: deviceName(p.device) },
    symptoms: p.symptoms.map(slug => ({ slug, name: symptomName(slug) })),
    hazards: p.hazards ?? ['mains'],
    causes: (p.causes ?? ['Failed component']).map((name, i) => ({ key: `c${i + 1}`, name })),
    stepTitles: p.steps ?? ['Inspect the board'],
    text: p.text,
    publishedAt: p.publishedAt ?? `2025-01-${String(id).padStart(2, '0')}T00:00:00.000Z`,
  }
}

const FIXTURE: SearchDocument[] = [
  doc(1, { device: 'trailing-edge-dimmer', symptoms: ['flicker'], title: 'Trailing-edge dimmer with LED lamps', text: 'Check the minimum load and the MOSFET pair. BT136 is not fitted on this design.', causes: ['Minimum load not met', 'Failed MOSFET'], steps: ['Measure the load', 'Check the gate drive'] }),
  doc(2, { device: 'leading-edge-dimmer', symptoms: ['does-not-dim'], title: 'Leading-edge dimmer stays at full', text: 'A shorted BT136 triac gives full output with no dimming range. Replace the triac and the snubber.', hazards: ['mains', 'heat'], causes: ['Shorted triac'], steps: ['Test the triac'] }),
  doc(3, { device: 'led-driver', symptoms: ['hum-noise'], title: 'LED driver noise at low levels', text: 'When dimmed low the output inductor sings; the ceramic capacitors can also be heard.', causes: ['Loose inductor winding'], steps: ['Listen with a stethoscope'] }),
  doc(4, { device: 'usb-charger', symptoms: ['no-output'], title: 'USB charger gives nothing', text: 'Start with the input fuse and the bulk capacitor. Discharge it through a resistor first.', hazards: ['mains', 'stored_energy'], causes: ['Open fuse', 'Dried capacitor'], steps: ['Check the fuse', 'Discharge the bulk capacitor'] }),
  doc(5, { device: 'led-panel', symptoms: ['ghosting'], title: 'Panel faint light', text: 'Leakage through the X2 capacitor keeps the string lit.', causes: ['Leaky X2 capacitor'] }),
  doc(6, { device: 'led-panel', symptoms: ['overheats'], title: 'LED panel ghosting after a driver swap', text: 'The replacement driver runs hot inside the frame.', causes: ['Undersized driver'] }),
  doc(7, { device: 'atx-psu', symptoms: ['trips-breaker'], title: 'ATX supply trips at switch-on', text: 'Inrush and a failed NTC; customers also describe ghosting on the monitor, which is unrelated.', hazards: ['mains', 'stored_energy'], causes: ['Failed NTC thermistor'] }),
  doc(8, { device: 'atx-psu', symptoms: ['overheats', 'no-output'], title: 'ATX supply shuts down hot', text: 'The fan bearing has seized; the BT136 reference on the silkscreen is a misprint.', hazards: ['mains', 'stored_energy', 'heat'], causes: ['Seized fan'], steps: ['Spin the fan by hand'] }),
  doc(9, { device: 'trailing-edge-dimmer', symptoms: ['flicker', 'hum-noise'], title: 'Touch dimmer pulses', text: 'BT136 substitutes: none needed for trailing edge. Firmware calibration fixes most units.', causes: ['Calibration lost'] }),
  doc(10, { device: 'led-driver', symptoms: ['does-not-dim', 'flicker'], title: 'Driver ignores the dimmer', text: 'Phase-cut input not recognised; a BT136 based dimmer is leading edge, which this driver dislikes.', hazards: ['none'], causes: ['Incompatible dimmer'] }),
  doc(11, { device: 'rotary-dimmer', symptoms: ['overheats'], title: 'Rotary dimmer hot knob', text: 'Worn potentiometer track and a loose terminal screw.', causes: ['Worn potentiometer'], publishedAt: '2025-03-01T00:00:00.000Z' }),
  doc(12, { device: 'rotary-dimmer', symptoms: ['overheats'], title: 'Rotary dimmer hot knob', text: 'Worn potentiometer track and a loose terminal screw.', causes: ['Worn potentiometer'], publishedAt: '2025-03-02T00:00:00.000Z' }),
]

let index: ProcedureSearchIndex
beforeEach(() => {
  index = new ProcedureSearchIndex(vocabulary)
  index.build(FIXTURE)
})

const ids = (hits: SearchHit[]): number[] => hits.map(h => h.id)
const sorted = (xs: number[]): number[] => [...xs].sort((a, b) => a - b)

describe('parseQuery', () => {
  it('lowercases, strips punctuation and control characters, drops stop words', () => {
    // Stop words: the usual short English stop list (common practice).
    expect(parseQuery('The FLICKER!!! at\u0000 the   low... setting?').terms).toEqual(['flicker', 'low', 'set'])
    expect(parseQuery('fli\u200bcker').terms).toEqual(['flicker']) // zero-width space is invisible, not a separator
    expect(parseQuery('?!...,;').terms).toEqual([])
  })

  it('folds accents, full-width and ligature forms (Unicode NFKD)', () => {
    expect(parseQuery('Ｆｌｉｃｋｅｒ ﬂicker flïcker').terms).toEqual(['flicker', 'flicker', 'flicker'])
  })

  it('reads every negation as "not", with or without the apostrophe', () => {
    for (const q of ['wont dim', 'won\'t dim', 'won’t dim', 'doesnt dim', 'doesn\'t dim', 'does not dim', 'no dimming', 'never dims', 'cannot dim']) {
      expect(parseQuery(q).terms, q).toEqual(['not', 'dim'])
    }
  })

  it('lets inflections meet: dim/dims/dimmed/dimming, charge/charging, fuse/fuses', () => {
    for (const w of ['dim', 'dims', 'dimmed', 'dimming']) expect(stemWord(w), w).toBe('dim')
    for (const w of ['charge', 'charges', 'charged', 'charging']) expect(stemWord(w), w).toBe('charg')
    for (const w of ['fuse', 'fuses', 'fused']) expect(stemWord(w), w).toBe('fus')
    expect(stemWord('batteries')).toBe(stemWord('battery'))
    expect(stemWord('dimmer')).toBe('dimmer') // the device, not the act of dimming
    expect(stemWord('buzzing')).toBe('buzz')
    expect(toIndexTerm('1N4007')).toBe('1n4007') // part numbers are left alone
  })

  it('marks only a still-typed last word as a prefix', () => {
    expect(parseQuery('flicker dimm').lastTermIsPrefix).toBe(true)
    expect(parseQuery('flicker dimm ').lastTermIsPrefix).toBe(false)
    expect(parseQuery('flicker dimm.').lastTermIsPrefix).toBe(false)
    expect(parseQuery('dimm the').lastTermIsPrefix).toBe(false) // the last word typed was a stop word
  })

  // Model and part numbers as written on rating plates and in parts lists (common practice):
  // letters and digits together, often hyphenated; a number with a unit is a value.
  it.each([
    { text: 'VR-240 stuck', codes: ['vr240'] },
    { text: 'vr240 dead', codes: ['vr240'] },
    { text: '1N4007 and BR1', codes: ['1n4007', 'br1'] },
    { text: 'PX-10L lens', codes: ['px10l'] },
    { text: 'VR240\'s knob', codes: ['vr240'] },
    { text: '24V 50Hz 100µF 2.5A', codes: [] },
    { text: 'USB-C charger', codes: [] },
  ])('reads model and part codes: $text', ({ text, codes }) => {
    expect(modelCodes(text).sort()).toEqual([...codes].sort())
    expect(parseQuery(text).codes.sort()).toEqual(modelCodes(text.toLowerCase()).sort())
  })

  it('finds where hyphenated codes are, for highlighting', () => {
    expect(hyphenatedCodeSpans('Vantrel VR-240 rotary, PX-10L')).toEqual([{ code: 'vr240', start: 8, end: 14 }, { code: 'px10l', start: 23, end: 29 }])
  })

  it('caps the query at its limits cheaply, without an error', () => {
    const long = parseQuery('flicker '.repeat(2000))
    expect(long.truncated).toBe(true)
    expect(long.terms.length).toBeLessThanOrEqual(QUERY_LIMITS.maxTerms)
    const words = Array.from({ length: 30 }, (_, i) => `word${i}x`).join(' ')
    expect(parseQuery(words).terms).toHaveLength(QUERY_LIMITS.maxTerms)
    expect(parseQuery(`${'a'.repeat(10_240)} flicker`).terms).toEqual([]) // one 10 kB "word" is dropped, not searched
  })
})

describe('ProcedureSearchIndex: matching', () => {
  it('weighs a symptom above a title above body text', () => {
    // "ghosting": symptom (and synonym) of 5, title of 6, body text of 7.
    const r = index.search({ q: 'ghosting' })
    expect(ids(r.hits)).toEqual([5, 6, 7])
    expect(r.hits[0]!.score).toBeGreaterThan(r.hits[1]!.score)
    expect(r.hits[1]!.score).toBeGreaterThan(r.hits[2]!.score)
  })

  it('tolerates a typo in a longer word: "flikers" finds Flickers', () => {
    const r = index.search({ q: 'flikers ' })
    expect(sorted(ids(r.hits).slice(0, 3))).toEqual([1, 9, 10])
    expect(r.suggestions[0]).toEqual({ slug: 'flicker', name: 'Flickers' })
    // A swapped pair of letters counts as one edit.
    expect(ids(index.search({ q: 'flikcers ' }).hits)).toContain(1)
  })

  it('completes the last, still-typed word only', () => {
    // "dimm" is on its way to "dimming" (doc 2: "no dimming range") and "dimmer".
    expect(ids(index.search({ q: 'dimm' }).hits)).toEqual(expect.arrayContaining([1, 2, 9, 10, 11, 12]))
    expect(index.search({ q: 'dimm ' }).total).toBe(0) // a finished "dimm" is not a word anywhere
    expect(sorted(ids(index.search({ q: 'potentiomet' }).hits))).toEqual([11, 12])
  })

  it('expands a synonym to its symptom at query time: "buzz" finds what is filed under Hums', () => {
    const r = index.search({ q: 'buzz when dimmed low' })
    expect(r.hits[0]!.id).toBe(3)
    expect(r.detectedSymptoms).toEqual(['hum-noise'])
    expect(r.hits[0]!.highlights.find(h => h.field === 'symptom')!.snippet).toEqual([{ text: 'Hums', match: true }])
  })

  it('finds "does not dim" whatever way the negation is typed', () => {
    for (const q of ['wont dim', 'won\'t dim', 'won’t dim', 'doesnt dim', 'doesn\'t dim', 'no dimming']) {
      const r = index.search({ q })
      expect(r.hits[0]?.id, q).toSatisfy((id: number) => id === 2 || id === 10)
      expect(sorted(ids(r.hits).slice(0, 2)), q).toEqual([2, 10])
    }
  })

  it('ignores stop words and punctuation', () => {
    const plain = index.search({ q: 'flicker ' })
    const noisy = index.search({ q: 'the, FLICKER!!! ... of ' })
    expect(ids(noisy.hits)).toEqual(ids(plain.hits))
    expect(noisy.hits.map(h => h.score)).toEqual(plain.hits.map(h => h.score))
    expect(index.search({ q: '?!...,;' })).toMatchObject({ hits: [], total: 0, mode: 'none' })
  })

  it('matches every term first and widens only when that finds too little', () => {
    expect(index.search({ q: 'fan bearing ' }).mode).toBe('all')
    const r = index.search({ q: 'seized fan zebra ' }) // nobody wrote about a zebra
    expect(r.mode).toBe('partial')
    expect(r.hits[0]!.id).toBe(8)
  })
})

describe('ProcedureSearchIndex: facets and filters', () => {
  type Filters = { deviceType?: string, symptom?: string, hazard?: string }
  const passes = (d: SearchDocument, f: Filters, skip?: keyof Filters): boolean =>
    (skip === 'deviceType' || !f.deviceType || d.deviceType.slug === f.deviceType)
    && (skip === 'symptom' || !f.symptom || d.symptoms.some(s => s.slug === f.symptom))
    && (skip === 'hazard' || !f.hazard || d.hazards.includes(f.hazard))
  const count = (docs: SearchDocument[], key: (d: SearchDocument) => string[]): Record<string, number> => {
    const out: Record<string, number> = {}
    for (const d of docs) for (const k of key(d)) out[k] = (out[k] ?? 0) + 1
    return out
  }
  const asRecord = (values: Array<{ value: string, count: number }>): Record<string, number> => Object.fromEntries(values.map(v => [v.value, v.count]))

  // Text-matched set known by construction: the documents whose text names BT136.
  const bt136 = FIXTURE.filter(d => d.text.includes('BT136'))
  const cases: Array<{ q: string, matched: SearchDocument[], f: Filters }> = [
    { q: 'BT136 ', matched: bt136, f: {} },
    { q: 'BT136 ', matched: bt136, f: { deviceType: 'trailing-edge-dimmer' } },
    { q: 'BT136 ', matched: bt136, f: { symptom: 'flicker', hazard: 'mains' } },
    { q: 'BT136 ', matched: bt136, f: { deviceType: 'led-driver', symptom: 'flicker', hazard: 'none' } },
    { q: '', matched: FIXTURE, f: { hazard: 'mains' } },
    { q: '', matched: FIXTURE, f: { deviceType: 'atx-psu', symptom: 'overheats' } },
    { q: '', matched: FIXTURE, f: { symptom: 'no-output', hazard: 'stored_energy' } },
  ]
  for (const { q, matched, f } of cases) {
    it(`counts each facet with the other filters applied: q="${q}" ${JSON.stringify(f)}`, () => {
      const r = index.search({ q, ...f })
      expect(asRecord(r.facets.deviceType)).toEqual(count(matched.filter(d => passes(d, f, 'deviceType')), d => [d.deviceType.slug]))
      expect(asRecord(r.facets.symptom)).toEqual(count(matched.filter(d => passes(d, f, 'symptom')), d => d.symptoms.map(s => s.slug)))
      expect(asRecord(r.facets.hazard)).toEqual(count(matched.filter(d => passes(d, f, 'hazard')), d => d.hazards))
      const expected = matched.filter(d => passes(d, f))
      expect(r.total).toBe(expected.length)
      expect(sorted(ids(r.hits))).toEqual(sorted(expected.map(d => d.id)))
    })
  }

  it('lists filtered documents newest first for an empty query', () => {
    const r = index.search({ q: '  ', deviceType: 'rotary-dimmer' })
    expect(r.mode).toBe('browse')
    expect(ids(r.hits)).toEqual([12, 11])
  })

  it('returns nothing for an empty query without filters', () => {
    expect(index.search({ q: '' })).toMatchObject({ hits: [], total: 0, facets: { deviceType: [], symptom: [], hazard: [] }, mode: 'none' })
  })

  it('keeps limit and offset within bounds', () => {
    expect(index.search({ q: '', hazard: 'mains', limit: 10_000 }).hits.length).toBeLessThanOrEqual(SEARCH_LIMITS.maxLimit)
    expect(ids(index.search({ q: '', hazard: 'mains', limit: 2, offset: -5 }).hits)).toEqual(ids(index.search({ q: '', hazard: 'mains', limit: 2 }).hits))
    expect(index.search({ q: '', hazard: 'mains', limit: Number.NaN }).hits).toHaveLength(Math.min(SEARCH_LIMITS.defaultLimit, FIXTURE.filter(d => d.hazards.includes('mains')).length))
    expect(index.search({ q: '', hazard: 'mains', offset: 1e9 }).hits).toEqual([])
    const page2 = index.search({ q: '', hazard: 'mains', limit: 3, offset: 3 })
    expect(ids(page2.hits)).toEqual(ids(index.search({ q: '', hazard: 'mains', limit: 6 }).hits).slice(3))
  })
})

describe('ProcedureSearchIndex: keeping the index current', () => {
  it('discard removes a procedure from every answer, and unknown ids are harmless', () => {
    expect(index.discard(8)).toBe(true)
    expect(index.discard(8)).toBe(false)
    expect(index.discard(999)).toBe(false)
    expect(index.has(8)).toBe(false)
    expect(index.size).toBe(FIXTURE.length - 1)
    expect(index.search({ q: 'seized fan' }).total).toBe(0)
    expect(ids(index.search({ q: 'BT136' }).hits)).not.toContain(8)
    expect(index.documentsAffectedBySymptom('no-output')).toEqual([4])
  })

  it('upsert replaces the previous version and adds new procedures', () => {
    expect(ids(index.search({ q: 'resistor ' }).hits)).toEqual([4])
    index.upsert({ ...FIXTURE[3]!, title: 'USB charger silent after a drop', text: 'Cracked ceramic capacitor at the input.' })
    expect(index.size).toBe(FIXTURE.length)
    const r = index.search({ q: 'cracked ceramic ' })
    expect(r.hits[0]!.id).toBe(4)
    expect(r.hits[0]!.highlights.find(h => h.field === 'text')!.snippet.map(p => p.text).join('')).toBe('Cracked ceramic capacitor at the input.')
    expect(index.search({ q: 'resistor ' }).total).toBe(0) // only the old text said it
    index.upsert(doc(20, { device: 'usb-charger', symptoms: ['overheats'], title: 'Charger cooks itself', text: 'Synchronous rectifier failed short.' }))
    expect(index.has(20)).toBe(true)
    expect(ids(index.search({ q: 'synchronous rectifier' }).hits)).toEqual([20])
  })

  it('never returns an id that is not indexed, whatever the query', () => {
    index.discard(1)
    index.discard(9)
    const live = new Set(FIXTURE.map(d => d.id).filter(id => id !== 1 && id !== 9))
    for (const q of ['flicker', 'BT136', 'dimm', 'trailing edge', 'buzz', 'flikers', 'dimmer flicker minimum load']) {
      for (const h of index.search({ q, limit: 100 }).hits) expect(live.has(h.id), `${q} → ${h.id}`).toBe(true)
    }
  })

  it('a vocabulary change re-indexes only the documents of the changed symptom', () => {
    expect(index.search({ q: 'drone ' }).total).toBe(0)
    const changed = { ...vocabulary, symptoms: vocabulary.symptoms.map(s => (s.slug === 'hum-noise' ? { ...s, synonyms: [...s.synonyms, 'drone'] } : s)) }
    expect(index.documentsAffectedBySymptom('hum-noise')).toEqual([3, 9])
    expect(index.setVocabulary(changed)).toEqual({ changedSymptoms: ['hum-noise'], reindexed: 2 })
    const r = index.search({ q: 'drone ' })
    expect(sorted(ids(r.hits))).toEqual([3, 9])
    expect(r.detectedSymptoms).toEqual(['hum-noise'])
    expect(index.setVocabulary(changed)).toEqual({ changedSymptoms: [], reindexed: 0 })
  })

  it('buildAsync gives the same index as build, and keeps upserts and discards made meanwhile', async () => {
    const other = new ProcedureSearchIndex(vocabulary)
    const pending = other.buildAsync(FIXTURE, { chunkSize: 3 })
    const added = doc(30, { device: 'led-driver', symptoms: ['flicker'], title: 'Driver flickers on generator power', text: 'Generator frequency drift.' })
    other.upsert(added)
    other.discard(12)
    await pending
    expect(other.size).toBe(FIXTURE.length)
    expect(other.has(30)).toBe(true)
    expect(other.has(12)).toBe(false)
    // The same library built at once: the same index and the same answers, scores included.
    const direct = new ProcedureSearchIndex(vocabulary)
    direct.build([...FIXTURE.filter(d => d.id !== 12), added])
    expect(other.snapshot()).toEqual(direct.snapshot())
    for (const q of ['BT136', 'wont dim', 'ghosting', 'dimm', 'buzz', 'flicker generator']) {
      expect(other.search({ q }).hits, q).toEqual(direct.search({ q }).hits)
    }
    expect(ids(other.search({ q: 'generator' }).hits)).toEqual([30])
  })
})

describe('ProcedureSearchIndex: highlights', () => {
  const fieldTexts = (d: SearchDocument): Record<string, string[]> => ({
    symptom: d.symptoms.map(s => s.name),
    title: [d.title],
    cause: d.causes.map(c => c.name),
    step: d.stepTitles,
    text: [d.text],
  })

  it('quotes only the matched document, as plain text parts, marking matched words', () => {
    for (const q of ['BT136 triac', 'flicker minimum load', 'ghosting', 'discharge capacitor', 'wont dim']) {
      for (const hit of index.search({ q }).hits) {
        const d = FIXTURE.find(x => x.id === hit.id)!
        for (const h of hit.highlights) {
          const quoted = h.snippet.map(p => p.text).join('')
          expect(fieldTexts(d)[h.field]!.some(t => t.includes(quoted)), `${q}: ${quoted}`).toBe(true)
          expect(h.snippet.some(p => p.match)).toBe(true)
          expect(quoted).not.toMatch(/[<>]/)
          // A word, or a whole symptom name when the match was through its synonym or key.
          for (const part of h.snippet.filter(p => p.match)) {
            if (h.field === 'symptom' && d.symptoms.some(s => s.name === part.text)) continue
            expect(part.text).toMatch(/^[\p{L}\p{N}'’]+$/u)
          }
        }
      }
    }
  })

  it('passes markup in a document through as text and adds none', () => {
    index.upsert(doc(40, { device: 'led-driver', symptoms: ['flicker'], title: 'Driver <b>flicker</b> & <script>alert(1)</script>', text: 'Varistor <img src=x onerror=alert(1)> cracked.' }))
    const hit = index.search({ q: 'varistor flicker' }).hits.find(h => h.id === 40)!
    const title = hit.highlights.find(h => h.field === 'title')!
    expect(title.snippet.map(p => p.text).join('')).toBe('Driver <b>flicker</b> & <script>alert(1)</script>')
    expect(title.snippet.filter(p => p.match).map(p => p.text)).toEqual(['flicker'])
    const text = hit.highlights.find(h => h.field === 'text')!
    expect('Varistor <img src=x onerror=alert(1)> cracked.').toContain(text.snippet.map(p => p.text).join(''))
  })
})

describe('ProcedureSearchIndex: evidence weighting', () => {
  // final = text × (1 + W·r), r = (confirmed + 1)/(total + 2): Laplace's rule of succession
  // (add-one smoothing; Mitchell, Machine Learning, 1997, §6.9.1, m-estimate with m = 2, p = ½).
  it('re-orders a near tie', () => {
    // 11 and 12 are the same procedure text: an exact tie.
    const favour = (winner: number) => (id: number) => (id === winner ? { confirmed: 40, total: 40 } : { confirmed: 0, total: 40 })
    const q = { q: 'rotary dimmer overheats' }
    expect(ids(index.search(q, { evidence: favour(12) }).hits).slice(0, 2)).toEqual([12, 11])
    expect(ids(index.search(q, { evidence: favour(11) }).hits).slice(0, 2)).toEqual([11, 12])
  })

  it('never lifts a weak text match over a strong one', () => {
    const plain = index.search({ q: 'ghosting' })
    expect(plain.hits[0]!.score / plain.hits[2]!.score).toBeGreaterThan(1 + EVIDENCE_WEIGHT) // a strong lead
    const seen: string[][] = []
    const againstStrong = (id: number, symptoms: string[]) => {
      seen.push(symptoms)
      return id === 5 ? { confirmed: 0, total: 1000 } : { confirmed: 1000, total: 1000 }
    }
    const weighted = index.search({ q: 'ghosting' }, { evidence: againstStrong })
    expect(weighted.hits[0]!.id).toBe(5)
    expect(seen.every(s => s.join() === 'ghosting')).toBe(true) // the symptom named in the query
    // Every score moves by a factor in [1, 1 + W].
    for (const h of weighted.hits) {
      const before = plain.hits.find(p => p.id === h.id)!.score
      expect(h.score / before).toBeGreaterThanOrEqual(1)
      expect(h.score / before).toBeLessThanOrEqual(1 + EVIDENCE_WEIGHT + 1e-12)
    }
  })

  it('uses the symptom filter as a queried symptom, and shrugs off nonsense from the lookup', () => {
    const calls: string[][] = []
    const r = index.search({ q: 'fan', symptom: 'overheats' }, {
      evidence: (_id, s) => {
        calls.push(s)
        return { confirmed: Number.NaN, total: -3 }
      },
    })
    expect(r.hits.length).toBeGreaterThan(0)
    expect(calls.every(s => s.includes('overheats'))).toBe(true)
    expect(r.hits.every(h => Number.isFinite(h.score))).toBe(true)
  })

  it('leaves the order alone when the query names no symptom', () => {
    let called = false
    const r = index.search({ q: 'BT136' }, { evidence: () => ((called = true), { confirmed: 9, total: 9 }) })
    expect(called).toBe(false)
    expect(ids(r.hits)).toEqual(ids(index.search({ q: 'BT136' }).hits))
  })
})

describe('ProcedureSearchIndex: robustness', () => {
  const loneSurrogate = fc.integer({ min: 0xd800, max: 0xdfff }).map(c => String.fromCharCode(c))
  const anyText = fc.oneof(
    fc.string({ unit: 'binary', maxLength: 300 }),
    fc.string({ unit: 'binary-ascii', maxLength: 300 }), // control characters
    fc.string({ unit: 'grapheme', maxLength: 100 }),
    fc.string({ unit: fc.constantFrom(...'!?.,;:()[]{}"\'`~@#$%^&*-_=+|\\/<>'), maxLength: 200 }),
    fc.string({ unit: fc.oneof(loneSurrogate, fc.constantFrom('a', 'é', ' ', '\'', '’')), maxLength: 100 }),
    fc.string({ unit: 'grapheme-ascii', minLength: 10_000, maxLength: 10_240 }),
  )

  it('never throws on arbitrary input, and answers only with indexed procedures', () => {
    const live = new Set(FIXTURE.map(d => d.id))
    fc.assert(
      fc.property(anyText, fc.option(fc.constantFrom('led-driver', 'nope', ''), { nil: undefined }), (q, deviceType) => {
        const parsed = parseQuery(q)
        expect(parsed.terms.length).toBeLessThanOrEqual(QUERY_LIMITS.maxTerms)
        for (const t of parsed.terms) expect(t.length).toBeLessThanOrEqual(QUERY_LIMITS.maxTermLength)
        const r = index.search({ q, deviceType })
        expect(Number.isFinite(r.tookMs)).toBe(true)
        for (const h of r.hits) expect(live.has(h.id)).toBe(true)
      }),
      { numRuns: 300 },
    )
  })

  it('accepts non-string input from untyped callers', () => {
    expect(index.search({ q: undefined }).total).toBe(0)
    expect(index.search({ q: 42 as unknown as string }).total).toBe(0)
  })
})

describe('joinedCodes', () => {
  const reference = (text: string) => [...text.matchAll(HYPHENATED_CODE)].map(m => m[1]! + m[2]!)
  it('finds what the HYPHENATED_CODE pattern finds', () => {
    for (const text of ['VR-240 and USB-C', 'A-B-C', '5VR-240', 'PX-10L, TO-220;', 'x-y', 'émetteur-Ω', 'é-1 ü-ß', '-A', 'A-', 'USB-C-2', 'Q1-Q2 R-12a-b']) {
      expect(joinedCodes(text), text).toEqual(reference(text))
    }
    // Property-based: random strings over letters, digits, hyphens and separators.
    const alphabet = fc.constantFrom('A', 'b', 'é', 'Ω', '1', '٣', '-', '–', ' ', ',', '.', 'x', '9', 'ß')
    fc.assert(fc.property(fc.array(alphabet, { maxLength: 40 }).map(a => a.join('')), (text) => {
      expect(joinedCodes(text)).toEqual(reference(text))
    }), { numRuns: 2000 })
  }, 30_000)
})

describe('stemWords', () => {
  // The indexOf scan must find exactly the words the highlight pattern finds.
  const viaPattern = (lower: string, stems: string[]) => {
    const pattern = buildHighlightPattern(stems, false)
    return pattern ? [...lower.matchAll(pattern)].map(m => [m.index, m.index + m[0].length]) : []
  }
  it('finds the words the highlight pattern finds', () => {
    const cases: Array<[string, string[]]> = [
      ['the dimmer flickers; flicker-free dimmers', ['flicker', 'dimmer']],
      ['it\'s o’clock, clocks and o\'clock', ['clock', 'o']],
      ['batteries and battery', ['battery']],
      ['ωmega ω-mega', ['ω']],
      ['aaaa', ['a', 'aa']],
    ]
    for (const [text, terms] of cases) expect(stemWords(text, highlightStems(terms)), text).toEqual(viaPattern(text, [...highlightStems(terms)]))
    const alphabet = fc.constantFrom('a', 'b', 'y', 'ie', 's', ' ', '-', '\'', '’', 'é', '1', '𝔡')
    const text = fc.array(alphabet, { maxLength: 60 }).map(a => a.join(''))
    const stems = fc.uniqueArray(fc.array(fc.constantFrom('a', 'b', 'y', 'ie', 's', 'é'), { minLength: 1, maxLength: 3 }).map(a => a.join('')), { minLength: 1, maxLength: 4 })
    fc.assert(fc.property(text, stems, (t, st) => {
      expect(stemWords(t, highlightStems(st))).toEqual(viaPattern(t, [...highlightStems(st)]))
    }), { numRuns: 1500 })
  }, 30_000)
})
