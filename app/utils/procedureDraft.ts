import { DraftContent, RevisionContent, type DraftStep } from '#shared/types/procedure'
import { ESCALATE, STEP_VERDICTS, type StepVerdict } from '#shared/types/verdicts'
import { HAZARDS, type Hazard } from '#shared/types/hazards'
import { describeZodError } from '#shared/utils/validation'

// The procedure editor's model, without Vue: what the form does to a draft (add, rename, move,
// remove causes, steps, parts and photos), which errors it shows, and how a draft reads as
// text. The store (app/stores/procedureDraft.ts) holds one draft and calls these on it.

/** A stored draft with every missing part filled from the schema's defaults, for the form to bind to. */
export function readDraft(raw: unknown): DraftContent {
  const body = raw && typeof raw === 'object' ? JSON.parse(JSON.stringify(raw)) as Record<string, unknown> : {}
  // A value that does not fit its field (an older draft, a hand-made one) is dropped, so the
  // field's default stands in and the rest of the draft is kept.
  for (let attempt = 0; attempt < 100; attempt++) {
    const parsed = DraftContent.safeParse(body)
    if (parsed.success) return parsed.data
    for (const issue of [...parsed.error.issues].reverse()) dropAt(body, issue.path)
  }
  return DraftContent.parse({})
}

function dropAt(root: Record<string, unknown>, path: PropertyKey[]): void {
  if (!path.length) return
  const parent = path.slice(0, -1).reduce<unknown>((node, k) => (node && typeof node === 'object' ? (node as Record<PropertyKey, unknown>)[k] : undefined), root)
  const last = path[path.length - 1]!
  if (Array.isArray(parent)) parent.splice(Number(last), 1)
  else if (parent && typeof parent === 'object') delete (parent as Record<PropertyKey, unknown>)[last]
}

/** A plain copy: drafts are JSON by nature, and reactive proxies cannot be structured-cloned. */
export function cloneDraft(d: DraftContent): DraftContent {
  return JSON.parse(JSON.stringify(d)) as DraftContent
}

/** A short key from a name, in the form RevisionContent accepts (`MOSFET Q1 shorted` → `mosfet_q1_shorted`). */
export function keyFromName(name: string, taken: Iterable<string>, fallback: string): string {
  const base = name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '_')
    .replace(/^_+|_+$/g, '')
    .slice(0, 32)
    .replace(/_+$/, '') || fallback
  const used = new Set(taken)
  if (!used.has(base)) return base
  for (let n = 2; ; n++) {
    const candidate = `${base}_${n}`
    if (!used.has(candidate)) return candidate
  }
}

/** The id of the input that edits a field path; error summaries link to it. */
export function fieldId(path: string): string {
  return `field-${path.replace(/\./g, '-')}`
}

// ── What the form shows ─────────────────────────────────────────────────────────────────────

/** What still stops a submission, by field path: the whole revision checked with the shared schema. */
export function completenessErrors(content: DraftContent): Record<string, string> {
  const parsed = RevisionContent.safeParse(content)
  return parsed.success ? {} : describeZodError(parsed.error).fields
}

function parentOf(path: string): string {
  const i = path.lastIndexOf('.')
  return i < 0 ? '' : path.slice(0, i)
}

/**
 * Whether visiting field `visited` reveals the error at `path`: the field itself, the items of a
 * list field (`steps.1.failPointsTo.0` under `steps.1.failPointsTo`), and the fields of one
 * measurement, whose rules are about the fields together (a range needs min or max).
 */
function isShownAfterVisit(path: string, visited: string): boolean {
  if (path === visited || parentOf(path) === visited) return true
  const group = parentOf(path)
  return group.endsWith('.measurement') && parentOf(visited) === group
}

/** The errors a form shows: those of fields already visited, or all of them once a submit was tried. */
export function visibleErrors(all: Record<string, string>, visited: Iterable<string>, showAll: boolean): Record<string, string> {
  if (showAll) return all
  const seen = [...visited]
  return Object.fromEntries(Object.entries(all).filter(([path]) => seen.some(v => isShownAfterVisit(path, v))))
}

const TOP_LABELS: Record<string, string> = {
  title: 'Title', deviceType: 'Device type', appliesTo: 'Applies to', summary: 'Summary', symptoms: 'Symptoms',
  hazards: 'Hazards', causes: 'Causes', steps: 'Steps', parts: 'Parts', fix: 'The fix', verification: 'Verification',
}
const FIELD_LABELS: Record<string, string> = {
  key: 'key', name: 'name', detail: 'detail', prior: 'how likely', title: 'title', instruction: 'instruction',
  quantity: 'what is measured', unit: 'unit', min: 'lowest good reading', max: 'highest good reading', nominal: 'nominal value',
  tolerancePct: 'tolerance', openExpected: 'open is good', failPointsTo: 'causes it points to', imageIds: 'photos',
  expectedCut: 'cut a good capture shows',
  verdicts: 'what the reading means', in_range: 'if it reads in range', low: 'if it reads low', high: 'if it reads high', open: 'if it reads OL',
  pass: 'if it passes', fail: 'if it fails', causes: 'causes', next: 'next step', conclude: 'what it confirms', minutes: 'minutes',
  partNumber: 'part number', substitutes: 'substitutes',
}

/** A field path in the author's words, naming the cause, step or part it is in (`Step 2 (Check Q1), reading · unit`). */
export function describeFieldPath(path: string, c: DraftContent): string {
  const [head, index, ...rest] = path.split('.')
  const top = TOP_LABELS[head ?? ''] ?? head ?? ''
  if (index === undefined) return top
  const i = Number(index)
  const field = rest.filter(s => !/^\d+$/.test(s) && s !== 'measurement').map(s => FIELD_LABELS[s] ?? s).join(', ')
  let item = `${top} · ${i + 1}`
  if (head === 'causes') item = `Cause ${i + 1}${c.causes[i]?.name ? ` (${c.causes[i]!.name})` : ''}`
  else if (head === 'steps') item = `Step ${i + 1}${c.steps[i]?.title ? ` (${c.steps[i]!.title})` : ''}${rest[0] === 'measurement' ? ', reading' : ''}`
  else if (head === 'parts') item = `Part ${i + 1}${c.parts[i]?.name ? ` (${c.parts[i]!.name})` : ''}`
  else if (head === 'symptoms' || head === 'appliesTo' || head === 'hazards') return `${top} · entry ${i + 1}`
  return field ? `${item} · ${field}` : item
}

/** Where to look for the input of a field path, nearest first: itself, the name beside a key, then the enclosing items. */
export function fieldPathCandidates(path: string): string[] {
  const candidates = [path, path.replace(/\.key$/, '.name'), path.replace(/\.key$/, '.title')]
  const segments = path.split('.')
  for (let n = segments.length - 1; n > 0; n--) candidates.push(segments.slice(0, n).join('.'))
  return candidates
}

// ── Editing ────────────────────────────────────────────────────────────────────────────────

/** Cause and step keys still derived from their name (new in this sitting, nothing refers to them yet), as `cause:<key>` / `step:<key>`. */
export type KeyFollowers = string[]
export type DraftItemKind = 'cause' | 'step'

const DraftCauseSchema = DraftContent.shape.causes.unwrap().element
const DraftStepSchema = DraftContent.shape.steps.unwrap().element
const DraftPartSchema = DraftContent.shape.parts.unwrap().element

export function moveWithin<T>(items: T[], from: number, to: number): void {
  if (to < 0 || to >= items.length || from === to) return
  const [item] = items.splice(from, 1)
  items.splice(to, 0, item as T)
}

function listOf(content: DraftContent, kind: DraftItemKind): Array<{ key: string }> {
  return kind === 'cause' ? content.causes : content.steps
}

/** Adds an empty cause or step with the schema's defaults; its key follows its name until it is relied on. */
export function addDraftItem(content: DraftContent, followers: KeyFollowers, kind: DraftItemKind): void {
  const list = listOf(content, kind)
  const key = keyFromName('', list.map(i => i.key), `${kind}_${list.length + 1}`)
  if (kind === 'cause') content.causes.push(DraftCauseSchema.parse({ key }))
  else content.steps.push(DraftStepSchema.parse({ key, imageIds: [] }))
  followers.push(`${kind}:${key}`)
}

/** Renames a cause or retitles a step; a new item's key follows, and so do the steps that point to a renamed cause. */
export function renameDraftItem(content: DraftContent, followers: KeyFollowers, kind: DraftItemKind, index: number, name: string): void {
  const list = listOf(content, kind)
  const item = list[index]
  if (!item) return
  if (kind === 'cause') content.causes[index]!.name = name
  else content.steps[index]!.title = name
  const follows = followers.indexOf(`${kind}:${item.key}`)
  if (follows < 0 || !name.trim()) return
  const next = keyFromName(name, list.map(i => i.key).filter(k => k !== item.key), `${kind}_${index + 1}`)
  if (next === item.key) return
  renameReferences(content, kind, item.key, next)
  followers[follows] = `${kind}:${next}`
  item.key = next
}

type VerdictEntryDraft = NonNullable<NonNullable<DraftStep['verdicts']>[StepVerdict]>

function eachEntry(content: DraftContent, visit: (entry: VerdictEntryDraft, step: DraftStep, verdict: StepVerdict) => void): void {
  for (const step of content.steps) {
    for (const verdict of STEP_VERDICTS) {
      const entry = step.verdicts?.[verdict]
      if (entry) visit(entry, step, verdict)
    }
  }
}

/** A verdict entry that says nothing any more is taken out, so the step reads as the author left it. */
function pruneEntry(step: DraftStep, verdict: StepVerdict): void {
  const entry = step.verdicts?.[verdict]
  if (!entry) return
  if (entry.causes?.length === 0) delete entry.causes
  if (entry.causes === undefined && entry.next === undefined && entry.conclude === undefined) delete step.verdicts![verdict]
}

/** Verdicts that name a cause (or lead to a step) by its old key follow it to the new one. */
function renameReferences(content: DraftContent, kind: DraftItemKind, from: string, to: string): void {
  eachEntry(content, (entry) => {
    if (kind === 'cause') {
      entry.causes = entry.causes?.map(k => (k === from ? to : k))
      if (entry.conclude === from) entry.conclude = to
    }
    else if (entry.next === from) entry.next = to
  })
}

/** Removes a cause, and every verdict's mention of it. */
export function removeDraftCause(content: DraftContent, index: number): void {
  const [cause] = content.causes.splice(index, 1)
  if (!cause) return
  eachEntry(content, (entry, step, verdict) => {
    entry.causes = entry.causes?.filter(k => k !== cause.key)
    if (entry.conclude === cause.key) delete entry.conclude
    pruneEntry(step, verdict)
  })
}

/** Removes a step; verdicts that led to it go on to the following step instead. */
export function removeDraftStep(content: DraftContent, index: number): void {
  const [step] = content.steps.splice(index, 1)
  if (!step) return
  eachEntry(content, (entry, s, verdict) => {
    if (entry.next === step.key) delete entry.next
    pruneEntry(s, verdict)
  })
}

/** What a verdict leads to in the editor's terms: '' (the following step), `next:<step key>` or `conclude:<cause key | escalate>`. */
export type VerdictTarget = '' | `next:${string}` | `conclude:${string}`

export function verdictTarget(step: DraftStep, verdict: StepVerdict): VerdictTarget {
  const entry = step.verdicts?.[verdict]
  if (entry?.conclude !== undefined) return `conclude:${entry.conclude}`
  if (entry?.next !== undefined) return `next:${entry.next}`
  return ''
}

/** Sets where a verdict leads: to a step, to a conclusion, or on to the following step. */
export function setVerdictTarget(step: DraftStep, verdict: StepVerdict, target: VerdictTarget): void {
  const entry = ((step.verdicts ??= {})[verdict] ??= {})
  delete entry.next
  delete entry.conclude
  if (target.startsWith('next:')) entry.next = target.slice(5)
  else if (target.startsWith('conclude:')) entry.conclude = target.slice(9)
  pruneEntry(step, verdict)
}

/** Turns a verdict's pointer to a cause on or off, keeping the causes in the order of the cause list. */
export function toggleVerdictCause(step: DraftStep, verdict: StepVerdict, causeKeys: string[], key: string, on: boolean): void {
  const entry = ((step.verdicts ??= {})[verdict] ??= {})
  const now = entry.causes ?? []
  const next = on ? [...now, key] : now.filter(k => k !== key)
  entry.causes = causeKeys.filter(k => next.includes(k)).concat(next.filter(k => !causeKeys.includes(k)))
  pruneEntry(step, verdict)
}

/** Takes out everything a verdict says (one the step can no longer give). */
export function dropVerdict(step: DraftStep, verdict: StepVerdict): void {
  if (step.verdicts) delete step.verdicts[verdict]
}

/** Whether a conclusion names the keyword for handing a job on. */
export const isEscalation = (target: VerdictTarget) => target === `conclude:${ESCALATE}`

export function addDraftPart(content: DraftContent): void {
  content.parts.push(DraftPartSchema.parse({ partNumber: '' }))
}

/** The hazards after ticking one: "none" excludes the others, as the schema demands. */
export function toggleHazard(hazards: readonly Hazard[], hazard: Hazard, on: boolean): Hazard[] {
  if (!on) return hazards.filter(x => x !== hazard)
  if (hazard === 'none') return ['none']
  return HAZARDS.filter(x => x !== 'none' && (x === hazard || hazards.includes(x)))
}

export function attachStepImage(step: DraftStep, imageId: number): void {
  const ids = (step.imageIds ??= [])
  if (!ids.includes(imageId)) ids.push(imageId)
}

export function detachStepImage(step: DraftStep, imageId: number): void {
  step.imageIds = (step.imageIds ?? []).filter(id => id !== imageId)
}

// ── As text ────────────────────────────────────────────────────────────────────────────────

const indented = (text: string) => text.split('\n').map(l => `  ${l}`)

/** The whole draft as plain lines, the form two versions are compared and copied in. */
export function draftOutline(c: DraftContent, changeNote: string): string {
  const causeName = new Map(c.causes.map(x => [x.key, x.name]))
  const stepTitle = new Map(c.steps.map(x => [x.key, x.title]))
  const lines: string[] = [
    `Title: ${c.title}`,
    `Device type: ${c.deviceType || '—'}`,
    `Applies to: ${c.appliesTo.join('; ') || '—'}`,
    `Symptoms: ${c.symptoms.join(', ') || '—'}`,
    `Hazards: ${c.hazards.join(', ') || '—'}`,
  ]
  if (c.summary.trim()) lines.push('Summary:', ...indented(c.summary))
  c.causes.forEach((cause, i) => {
    lines.push(`Cause ${i + 1}: ${cause.name}, how likely ${cause.prior}`)
    if (cause.detail.trim()) lines.push(...indented(cause.detail))
  })
  c.steps.forEach((step, i) => {
    lines.push(`Step ${i + 1}: ${step.title}`, ...indented(step.instruction))
    const m = step.measurement
    if (m) {
      const range = [m.min !== undefined ? `min ${m.min}` : '', m.max !== undefined ? `max ${m.max}` : '', m.nominal !== undefined ? `nominal ${m.nominal}` : '', m.tolerancePct !== undefined ? `± ${m.tolerancePct} %` : '', m.openExpected ? 'open is good' : ''].filter(Boolean).join(', ')
      lines.push(`  Reading: ${m.quantity.replace('_', ' ')} in ${m.unit}; ${range || 'no range'}`)
    }
    for (const verdict of STEP_VERDICTS) {
      const e = step.verdicts?.[verdict]
      if (!e) continue
      const said = [
        e.causes?.length ? `points to ${e.causes.map(k => causeName.get(k) ?? k).join(', ')}` : '',
        e.next ? `go to ${stepTitle.get(e.next) ?? e.next}` : '',
        e.conclude ? `confirms ${causeName.get(e.conclude) ?? e.conclude}` : '',
      ].filter(Boolean).join('; ')
      lines.push(`  If ${verdict.replace('_', ' ')}: ${said}`)
    }
    if (step.minutes) lines.push(`  About ${step.minutes} min`)
    if (step.imageIds?.length) lines.push(`  Photos: ${step.imageIds.join(', ')}`)
    if (step.expectedCut?.length) lines.push(`  A capture passes when its cut is: ${step.expectedCut.join(', ')}`)
  })
  c.parts.forEach((part, i) => lines.push(`Part ${i + 1}: ${part.name}${part.partNumber ? ` (${part.partNumber})` : ''}${part.substitutes.length ? ` — or ${part.substitutes.join(', ')}` : ''}`))
  if (c.fix.trim()) lines.push('Fix:', ...indented(c.fix))
  if (c.verification.trim()) lines.push('Verification:', ...indented(c.verification))
  lines.push(`Change note: ${changeNote || '—'}`)
  return `${lines.join('\n')}\n`
}
