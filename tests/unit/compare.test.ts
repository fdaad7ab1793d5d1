import { describe, expect, it } from 'vitest'
import { RevisionContent } from '#shared/types/procedure'
import { compareContents, measurementText, wordDiff } from '#shared/utils/compare'
import { makeContent } from '../helpers/content'

const side = (parts: ReturnType<typeof wordDiff>, which: 'before' | 'after') =>
  parts.filter(p => (which === 'before' ? !p.added : !p.removed)).map(p => p.value).join('')
const marked = (parts: ReturnType<typeof wordDiff>) =>
  parts.map(p => (p.removed ? `[-${p.value}-]` : p.added ? `{+${p.value}+}` : p.value)).join('')

describe('wordDiff', () => {
  // The expected markings are what a reader of the two texts names as changed, word by word
  // (the `[-…-]{+…+}` notation of `git diff --word-diff=plain`, common practice).
  it.each([
    ['a changed value is shown whole, not from its first changed digit', 'Good reading 0.40 – 0.70 V', 'Good reading 0.45 – 0.70 V', 'Good reading [-0.40-]{+0.45+} – 0.70 V'],
    ['a number that gains a digit', 'Wait 5 s', 'Wait 15 s', 'Wait [-5-]{+15+} s'],
    ['words added before a full stop keep the full stop after them', 'stays at full.', 'stays at full and dims.', 'stays at full{+ and dims+}.'],
    ['a removed phrase and an added one stay apart', 'The lamp stays at full and never dims.', 'The lamp stays on and never dims.', 'The lamp stays [-at full-]{+on+} and never dims.'],
    ['words added at the end', 'The knob does nothing', 'The knob does nothing at all', 'The knob does nothing{+ at all+}'],
    ['a space taken out before a full stop', 'Q1 is shorted .', 'Q1 is shorted.', 'Q1 is shorted[- -].'],
    ['words put in around a kept space leave the space unmarked', 'passed in full and the light', 'passed in full, the other is still cut, and the light', 'passed in full{+,+} {+the other is still cut, +}and the light'],
  ])('%s', (_label, a, b, expected) => {
    const parts = wordDiff(a, b)
    expect(marked(parts)).toBe(expected)
  })

  it.each([
    ['stays at full', 'stays and dims fully'],
    ['Near 0 V both ways: Q1 is shorted.', 'Near 0 V both ways : Q1 is  shorted .'],
    ['line one\n\nline two', 'line one\nline two and three'],
    ['', 'all new'],
    ['all gone', ''],
    ['A shorted BR1 diode bypasses Q1 on one half-cycle only; the lamp still dims a little', 'A shorted BR1 diode bypasses Q1 on one half-cycle; the lamp still dims'],
  ])('gives back both texts exactly: %j → %j', (a, b) => {
    const parts = wordDiff(a, b)
    expect(side(parts, 'before')).toBe(a)
    expect(side(parts, 'after')).toBe(b)
    // Two words are never glued: every word of each text is a word of its side.
    expect(side(parts, 'after').split(/\s+/)).toEqual(b.split(/\s+/))
  })
})

describe('compareContents', () => {
  const base = RevisionContent.parse(makeContent({ title: 'Dimmer test' }))

  it('names quantities, causes, device types and symptoms instead of their keys', () => {
    const changed = structuredClone(base)
    changed.deviceType = 'pir-occupancy-switch'
    changed.symptoms = ['does-not-dim', 'flickers-one-half-cycle']
    changed.steps[0]!.measurement = { quantity: 'ac_voltage', unit: 'V', max: 120 }
    changed.steps[0]!.verdicts = { low: { causes: ['shorted-fet', 'open-pot'] } }
    const cmp = compareContents(base, changed, {
      deviceTypes: { 'rotary-led-dimmer-trailing-edge': '2-wire rotary LED dimmer', 'pir-occupancy-switch': 'PIR occupancy switch' },
      symptoms: { 'does-not-dim': 'Does not dim', 'flickers-one-half-cycle': 'Flickers on one half-cycle' },
    })
    // What the reader sees: titles and the text of every change.
    const text = JSON.stringify([cmp.fields, ...cmp.causes, ...cmp.steps].map(x => ('title' in x ? [x.title, x.fields] : x)))
    for (const key of ['ac_voltage', 'diode_drop', 'shorted-fet', 'open-pot', 'pir-occupancy-switch', 'flickers-one-half-cycle']) expect(text).not.toContain(key)
    const step = cmp.steps.find(s => s.key === 'fet-diode')!
    const reading = step.fields.find(f => f.field === 'measurement')!
    expect(side(reading.parts, 'before')).toBe('Diode test: 0.4 – 0.7 V')
    expect(side(reading.parts, 'after')).toBe('AC voltage: ≤ 120 V')
    const low = step.fields.find(f => f.field === 'verdicts.low')!
    expect(side(low.parts, 'after')).toBe('points to Shorted switching MOSFET or Open control potentiometer')
    expect(side(cmp.fields.find(f => f.field === 'deviceType')!.parts, 'after')).toBe('PIR occupancy switch')
    expect(side(cmp.fields.find(f => f.field === 'symptoms')!.parts, 'after')).toBe('Does not dim; Flickers on one half-cycle')
  })

  it('says a changed branch in words, with each revision\'s step numbers', () => {
    const before = structuredClone(base)
    before.steps[0]!.verdicts = { low: { causes: ['shorted-fet'], next: 'pot' }, open: { causes: ['shorted-fet'] } }
    const after = structuredClone(base)
    after.steps[0]!.verdicts = { low: { conclude: 'shorted-fet' }, open: { causes: ['shorted-fet'] }, in_range: { next: 'pot' } }
    after.steps[1]!.minutes = 4
    const cmp = compareContents(before, after)
    const step = cmp.steps.find(s => s.key === 'fet-diode')!
    expect(step.kind).toBe('changed')
    expect(step.fields.map(f => f.summary).filter(Boolean)).toEqual([
      'if it reads in range: was → on to the following step, now → step 2',
      'if it reads low: was → step 2, now → confirms Shorted switching MOSFET',
    ])
    const pot = cmp.steps.find(s => s.key === 'pot')!
    expect(side(pot.fields.find(f => f.field === 'minutes')!.parts, 'after')).toBe('about 4 min')
  })

  it('says a cause added to a verdict as such', () => {
    const before = structuredClone(base)
    const after = structuredClone(base)
    after.steps[0]!.verdicts = { ...after.steps[0]!.verdicts, high: { causes: ['shorted-fet', 'open-pot'] } }
    const step = compareContents(before, after).steps.find(s => s.key === 'fet-diode')!
    expect(step.fields.map(f => f.summary)).toEqual(['if it reads high: now also points to Open control potentiometer'])
  })

  it.each([
    [{ quantity: 'resistance', unit: 'kΩ', nominal: 220, tolerancePct: 20 }, 'Resistance: 220 kΩ ± 20 %'],
    [{ quantity: 'resistance', unit: 'Ω', openExpected: true }, 'Resistance: open'],
    [{ quantity: 'dc_voltage', unit: 'V', min: 11.4 }, 'DC voltage: ≥ 11.4 V'],
  ] as const)('writes the expected reading as the author set it: %j', (spec, text) => {
    expect(measurementText(spec)).toBe(text)
  })
})
