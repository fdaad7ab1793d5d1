import { diffWords } from 'diff'
import type { DraftContent, RevisionContent } from '../types/procedure'
import type { FieldChange, ItemChange, TextDiffPart } from '../types/procedure-api'

type Content = RevisionContent | DraftContent

function textDiff(field: string, label: string, a: string, b: string): FieldChange | null {
  if (a === b) return null
  const parts: TextDiffPart[] = diffWords(a, b).map(p => ({ value: p.value, ...(p.added ? { added: true } : {}), ...(p.removed ? { removed: true } : {}) }))
  return { field, label, parts }
}

const list = (xs: readonly (string | number)[] | undefined) => (xs ?? []).join(', ')

function measurementText(m: Content['steps'][number]['measurement']): string {
  if (!m) return ''
  const range = m.nominal !== undefined ? `${m.nominal} ${m.unit ?? ''} ± ${m.tolerancePct ?? '?'} %` : `${m.min ?? '…'} – ${m.max ?? '…'} ${m.unit ?? ''}`
  return `${m.quantity ?? ''}: ${range}${m.openExpected ? ' (open expected)' : ''}`.trim()
}

function compareItems<T>(
  a: T[], b: T[], keyOf: (x: T) => string, titleOf: (x: T) => string,
  fieldsOf: (x: T) => Array<[field: string, label: string, text: string]>,
): ItemChange[] {
  const ia = new Map(a.map((x, i) => [keyOf(x), i]))
  const ib = new Map(b.map((x, i) => [keyOf(x), i]))
  const out: ItemChange[] = []
  b.forEach((item, to) => {
    const key = keyOf(item)
    const from = ia.get(key)
    if (from === undefined) {
      out.push({ key, kind: 'added', from: null, to, title: titleOf(item), fields: fieldsOf(item).map(([f, l, t]) => textDiff(f, l, '', t)).filter((x): x is FieldChange => !!x) })
      return
    }
    const before = new Map(fieldsOf(a[from]!).map(([f, , t]) => [f, t]))
    const fields = fieldsOf(item).map(([f, l, t]) => textDiff(f, l, before.get(f) ?? '', t)).filter((x): x is FieldChange => !!x)
    // Moved means: its place among the items both revisions share changed.
    const sharedBefore = a.filter(x => ib.has(keyOf(x))).map(keyOf).indexOf(key)
    const sharedAfter = b.filter(x => ia.has(keyOf(x))).map(keyOf).indexOf(key)
    const kind = fields.length ? 'changed' : sharedBefore !== sharedAfter ? 'moved' : 'unchanged'
    out.push({ key, kind, from, to, title: titleOf(item), fields })
  })
  a.forEach((item, from) => {
    const key = keyOf(item)
    if (!ib.has(key)) out.push({ key, kind: 'removed', from, to: null, title: titleOf(item), fields: fieldsOf(item).map(([f, l, t]) => textDiff(f, l, t, '')).filter((x): x is FieldChange => !!x) })
  })
  return out
}

/**
 * Structured comparison of two revisions: top-level fields as word diffs, and causes, steps and
 * parts matched by key (parts by name) as added / removed / changed / moved / unchanged.
 */
export function compareContents(a: Content, b: Content) {
  const fields = [
    textDiff('title', 'Title', a.title ?? '', b.title ?? ''),
    textDiff('deviceType', 'Device type', a.deviceType ?? '', b.deviceType ?? ''),
    textDiff('appliesTo', 'Applies to', list(a.appliesTo), list(b.appliesTo)),
    textDiff('symptoms', 'Symptoms', list(a.symptoms), list(b.symptoms)),
    textDiff('hazards', 'Hazards', list(a.hazards), list(b.hazards)),
    textDiff('summary', 'Summary', a.summary ?? '', b.summary ?? ''),
    textDiff('fix', 'Fix', a.fix ?? '', b.fix ?? ''),
    textDiff('verification', 'Verification', a.verification ?? '', b.verification ?? ''),
  ].filter((x): x is FieldChange => !!x)
  const causes = compareItems(a.causes ?? [], b.causes ?? [], c => c.key, c => c.name, c => [
    ['name', 'Name', c.name], ['detail', 'Detail', c.detail ?? ''], ['prior', 'Prior', String(c.prior)],
  ])
  const steps = compareItems(a.steps ?? [], b.steps ?? [], s => s.key, s => s.title, s => [
    ['title', 'Title', s.title], ['instruction', 'Instruction', s.instruction ?? ''], ['measurement', 'Expected reading', measurementText(s.measurement)],
    ['failPointsTo', 'A failing reading points to', list(s.failPointsTo)], ['imageIds', 'Images', list(s.imageIds)],
  ])
  const parts = compareItems(a.parts ?? [], b.parts ?? [], p => p.name, p => p.name, p => [
    ['partNumber', 'Part number', p.partNumber ?? ''], ['substitutes', 'Substitutes', list(p.substitutes)],
  ])
  return { fields, causes, steps, parts }
}
