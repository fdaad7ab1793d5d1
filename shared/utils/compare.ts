import { diffArrays } from 'diff'
import type { DraftContent, RevisionContent } from '../types/procedure'
import type { FieldChange, ItemChange, TextDiffPart } from '../types/procedure-api'
import { QUANTITY_LABELS } from '../types/quantities'
import { CUT_TYPE_NAMES } from '../types/captures'
import type { CutType } from './waveform/analyse'
import { ESCALATE, STEP_VERDICTS, verdictCondition } from '../types/verdicts'
import type { VerdictEntry } from '../types/verdicts'

type Content = RevisionContent | DraftContent
type Measurement = Content['steps'][number]['measurement']

/** Names for the slugs a revision holds, so a comparison reads in words (the server knows them; content alone does not). */
export interface ComparisonNames {
  deviceTypes?: Readonly<Record<string, string>>
  symptoms?: Readonly<Record<string, string>>
}

// A token is a run of spaces, a word, or one mark of punctuation. A word holds letters and
// digits joined by a point, comma, apostrophe or hyphen, so a value is one token ("0.40",
// "4k7", "half-cycle") and a change shows the whole value, never a changed digit after "0.".
const TOKENS = /\s+|[\p{L}\p{N}]+(?:[.,'’-][\p{L}\p{N}]+)*|[^\s\p{L}\p{N}]/gu
const SPACE = /^\s+$/

/**
 * A word diff of two texts, as parts in reading order. Joining the parts that are not added gives
 * `a` exactly, joining those not removed gives `b` exactly: spaces and full stops stay where they
 * were. A space between two changes belongs to the change, so a changed phrase reads as one
 * struck-through phrase and one underlined phrase.
 *
 * @example
 * wordDiff('stays at full.', 'stays on.')
 * // → [{ value: 'stays ' }, { value: 'at full', removed: true }, { value: 'on', added: true }, { value: '.' }]
 */
export function wordDiff(a: string, b: string): TextDiffPart[] {
  const changes = diffArrays(a.match(TOKENS) ?? [], b.match(TOKENS) ?? [])
  const out: TextDiffPart[] = []
  // A run of changes with the spaces between them, gathered before it is written out.
  let block: Array<{ kind: 'removed' | 'added' | 'space', text: string }> = []
  const flush = () => {
    const has = (kind: 'removed' | 'added') => block.some(x => x.kind === kind)
    if (has('removed') && has('added')) {
      // One struck-through phrase and one underlined phrase; the spaces between belong to both.
      const removed = block.filter(x => x.kind !== 'added').map(x => x.text).join('')
      const added = block.filter(x => x.kind !== 'removed').map(x => x.text).join('')
      // Spaces both sides share at the edges of a change are not part of it.
      const lead = sharedSpace(removed, added, 'start')
      const tail = sharedSpace(removed.slice(lead.length), added.slice(lead.length), 'end')
      if (lead) out.push({ value: lead })
      out.push({ value: removed.slice(lead.length, removed.length - tail.length), removed: true })
      out.push({ value: added.slice(lead.length, added.length - tail.length), added: true })
      if (tail) out.push({ value: tail })
    }
    else {
      // Only words put in (or only taken out): the spaces between them stay plain text.
      for (const x of block) out.push(x.kind === 'space' ? { value: x.text } : { value: x.text, [x.kind]: true })
    }
    block = []
  }
  changes.forEach((change, i) => {
    const text = change.value.join('')
    if (change.removed) block.push({ kind: 'removed', text })
    else if (change.added) block.push({ kind: 'added', text })
    else if (SPACE.test(text) && block.length && i + 1 < changes.length) block.push({ kind: 'space', text })
    else {
      flush()
      out.push({ value: text })
    }
  })
  flush()
  // Two plain parts in a row read as one.
  return out.reduce<TextDiffPart[]>((parts, part) => {
    const last = parts[parts.length - 1]
    if (last && !last.added && !last.removed && !part.added && !part.removed) last.value += part.value
    else parts.push(part)
    return parts
  }, [])
}

function sharedSpace(a: string, b: string, at: 'start' | 'end'): string {
  const space = (t: string) => (at === 'start' ? /^\s*/ : /\s*$/).exec(t)![0]
  const [x, y] = [space(a), space(b)]
  let n = 0
  while (n < x.length && n < y.length && (at === 'start' ? x[n] === y[n] : x[x.length - 1 - n] === y[y.length - 1 - n])) n++
  // A change that is nothing but spaces keeps them.
  n = Math.min(n, a.length - 1, b.length - 1)
  if (n <= 0) return ''
  return at === 'start' ? x.slice(0, n) : x.slice(x.length - n)
}

function textDiff(field: string, label: string, a: string, b: string): FieldChange | null {
  if (a === b) return null
  return { field, label, parts: wordDiff(a, b) }
}

const list = (xs: readonly (string | number)[] | undefined, sep = ', ') => (xs ?? []).join(sep)
const named = (keys: readonly string[] | undefined, names: ReadonlyMap<string, string> | Readonly<Record<string, string>> | undefined) =>
  (keys ?? []).map(k => (names instanceof Map ? names.get(k) : (names as Readonly<Record<string, string>> | undefined)?.[k]) ?? k)

/** The expected reading as the author wrote it: `Diode test: 0.4 – 0.7 V`, `Resistance: 220 kΩ ± 20 %`. */
export function measurementText(m: Measurement): string {
  if (!m) return ''
  const unit = m.unit ? ` ${m.unit}` : ''
  let range = ''
  if (m.nominal !== undefined) range = `${m.nominal}${unit} ± ${m.tolerancePct ?? '?'} %`
  else if (m.min !== undefined && m.max !== undefined) range = `${m.min} – ${m.max}${unit}`
  else if (m.min !== undefined) range = `≥ ${m.min}${unit}`
  else if (m.max !== undefined) range = `≤ ${m.max}${unit}`
  const open = m.openExpected ? (range ? ', or open' : 'open') : ''
  const quantity = m.quantity ? QUANTITY_LABELS[m.quantity] ?? m.quantity : ''
  return `${quantity}: ${range}${open}`.trim()
}

const photos = (ids: readonly number[] | undefined) => (ids?.length ? `${ids.length} ${ids.length === 1 ? 'photo' : 'photos'}` : '')

type Step = Content['steps'][number]

/** Where one verdict of a step leads, in words: `step 4`, `confirms Bridge diode shorted`, `pass the job on`, or ''. */
function targetText(entry: Partial<VerdictEntry> | undefined, causes: ReadonlyMap<string, string>, steps: ReadonlyArray<Pick<Step, 'key' | 'title'>>): string {
  if (entry?.conclude === ESCALATE) return 'pass the job on'
  if (entry?.conclude) return `confirms ${causes.get(entry.conclude) ?? entry.conclude}`
  if (entry?.next) {
    const i = steps.findIndex(s => s.key === entry.next)
    return i < 0 ? `“${entry.next}”` : `step ${i + 1}`
  }
  return ''
}

/** What one verdict of a step says, in words, for the side-by-side view: `points to X or Y, then step 4`. */
function verdictText(entry: Partial<VerdictEntry> | undefined, causes: ReadonlyMap<string, string>, steps: ReadonlyArray<Pick<Step, 'key' | 'title'>>): string {
  if (!entry) return ''
  const parts: string[] = []
  if (entry.causes?.length) parts.push(`points to ${named(entry.causes, causes).join(' or ')}`)
  const target = targetText(entry, causes, steps)
  if (target) parts.push(target)
  return parts.join(', then ')
}

const NEXT_IN_ORDER = 'on to the following step'

/**
 * Per verdict, what changed in its meaning, as a sentence: `if it reads low: was → step 4, now →
 * confirms Bridge diode shorted`, `if it reads high: now also points to BR1 diode shorted`. Step
 * numbers are each revision's own.
 */
function verdictChanges(a: Step | undefined, b: Step | undefined, sides: { a: Content, b: Content }, causeNames: { a: ReadonlyMap<string, string>, b: ReadonlyMap<string, string> }): FieldChange[] {
  const out: FieldChange[] = []
  for (const verdict of STEP_VERDICTS) {
    const [ea, eb] = [a?.verdicts?.[verdict], b?.verdicts?.[verdict]]
    const before = verdictText(ea, causeNames.a, sides.a.steps ?? [])
    const after = verdictText(eb, causeNames.b, sides.b.steps ?? [])
    if (before === after) continue
    const said: string[] = []
    const [ta, tb] = [targetText(ea, causeNames.a, sides.a.steps ?? []), targetText(eb, causeNames.b, sides.b.steps ?? [])]
    if (ta !== tb) said.push(`was → ${ta || NEXT_IN_ORDER}, now → ${tb || NEXT_IN_ORDER}`)
    // A confirmed cause counts among the causes pointed to: moving a cause into a conclusion is not a removal.
    const pointed = (e: Partial<VerdictEntry> | undefined, names: ReadonlyMap<string, string>) =>
      named([...(e?.causes ?? []), ...(e?.conclude && e.conclude !== ESCALATE ? [e.conclude] : [])], names)
    const [ca, cb] = [pointed(ea, causeNames.a), pointed(eb, causeNames.b)]
    const added = cb.filter(c => !ca.includes(c))
    const removed = ca.filter(c => !cb.includes(c))
    if (added.length) said.push(`now ${ca.length ? 'also ' : ''}points to ${added.join(' or ')}`)
    if (removed.length) said.push(`no longer points to ${removed.join(' or ')}`)
    const condition = verdictCondition(verdict)
    out.push({ field: `verdicts.${verdict}`, label: condition.charAt(0).toUpperCase() + condition.slice(1), parts: wordDiff(before, after), summary: `${condition}: ${said.join('; ')}` })
  }
  return out
}

type FieldsOf<T> = (x: T, side: 'a' | 'b') => Array<[field: string, label: string, text: string]>

function compareItems<T>(a: T[], b: T[], keyOf: (x: T) => string, titleOf: (x: T) => string, fieldsOf: FieldsOf<T>): ItemChange[] {
  const ia = new Map(a.map((x, i) => [keyOf(x), i]))
  const ib = new Map(b.map((x, i) => [keyOf(x), i]))
  const out: ItemChange[] = []
  const present = (fields: Array<FieldChange | null>) => fields.filter((x): x is FieldChange => !!x)
  b.forEach((item, to) => {
    const key = keyOf(item)
    const from = ia.get(key)
    if (from === undefined) {
      out.push({ key, kind: 'added', from: null, to, title: titleOf(item), fields: present(fieldsOf(item, 'b').map(([f, l, t]) => textDiff(f, l, '', t))) })
      return
    }
    const before = new Map(fieldsOf(a[from]!, 'a').map(([f, , t]) => [f, t]))
    const fields = present(fieldsOf(item, 'b').map(([f, l, t]) => textDiff(f, l, before.get(f) ?? '', t)))
    // Moved means: its place among the items both revisions share changed.
    const sharedBefore = a.filter(x => ib.has(keyOf(x))).map(keyOf).indexOf(key)
    const sharedAfter = b.filter(x => ia.has(keyOf(x))).map(keyOf).indexOf(key)
    const kind = fields.length ? 'changed' : sharedBefore !== sharedAfter ? 'moved' : 'unchanged'
    out.push({ key, kind, from, to, title: titleOf(item), fields })
  })
  a.forEach((item, from) => {
    const key = keyOf(item)
    if (!ib.has(key)) out.push({ key, kind: 'removed', from, to: null, title: titleOf(item), fields: present(fieldsOf(item, 'a').map(([f, l, t]) => textDiff(f, l, t, ''))) })
  })
  return out
}

/**
 * Structured comparison of two revisions: top-level fields as word diffs, and causes, steps and
 * parts matched by key (parts by name) as added / removed / changed / moved / unchanged. Keys
 * never reach the reader: causes, quantities, device types and symptoms are shown by name.
 */
export function compareContents(a: Content, b: Content, names: ComparisonNames = {}) {
  const causeNames = { a: new Map((a.causes ?? []).map(c => [c.key, c.name])), b: new Map((b.causes ?? []).map(c => [c.key, c.name])) }
  const deviceType = (slug: string | undefined) => (slug ? names.deviceTypes?.[slug] ?? slug : '')
  const fields = [
    textDiff('title', 'Title', a.title ?? '', b.title ?? ''),
    textDiff('deviceType', 'Device type', deviceType(a.deviceType), deviceType(b.deviceType)),
    textDiff('appliesTo', 'Applies to', list(a.appliesTo, '; '), list(b.appliesTo, '; ')),
    textDiff('symptoms', 'Symptoms', list(named(a.symptoms, names.symptoms), '; '), list(named(b.symptoms, names.symptoms), '; ')),
    textDiff('hazards', 'Hazards', list(a.hazards), list(b.hazards)),
    textDiff('summary', 'Summary', a.summary ?? '', b.summary ?? ''),
    textDiff('fix', 'Fix', a.fix ?? '', b.fix ?? ''),
    textDiff('verification', 'Verification', a.verification ?? '', b.verification ?? ''),
  ].filter((x): x is FieldChange => !!x)
  const causes = compareItems(a.causes ?? [], b.causes ?? [], c => c.key, c => c.name, c => [
    ['name', 'Name', c.name], ['detail', 'Detail', c.detail ?? ''], ['prior', 'How likely, before any records', String(c.prior)],
  ])
  const steps = compareItems(a.steps ?? [], b.steps ?? [], s => s.key, s => s.title, s => [
    ['title', 'Title', s.title], ['instruction', 'Instruction', s.instruction ?? ''], ['measurement', 'Expected reading', measurementText(s.measurement)],
    ['minutes', 'Minutes it takes', s.minutes ? `about ${s.minutes} min` : ''], ['imageIds', 'Photos', photos(s.imageIds)],
    ['expectedCut', 'Cut a good capture shows', (s.expectedCut ?? []).map(c => CUT_TYPE_NAMES[c as CutType] ?? c).join(' or ')],
  ])
  // What each verdict means, said as sentences after the step's other changes.
  const stepA = new Map((a.steps ?? []).map(s => [s.key, s]))
  const stepB = new Map((b.steps ?? []).map(s => [s.key, s]))
  for (const item of steps) {
    const changes = verdictChanges(stepA.get(item.key), stepB.get(item.key), { a, b }, causeNames)
    if (changes.length === 0) continue
    item.fields.push(...changes)
    if (item.kind === 'unchanged' || item.kind === 'moved') item.kind = 'changed'
  }
  const parts = compareItems(a.parts ?? [], b.parts ?? [], p => p.name, p => p.name, p => [
    ['partNumber', 'Part number', p.partNumber ?? ''], ['substitutes', 'Substitutes', list(p.substitutes, '; ')],
  ])
  return { fields, causes, steps, parts }
}
