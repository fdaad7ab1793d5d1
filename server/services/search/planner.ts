/**
 * From a parsed query to the documents that match its text: which index terms each query word
 * may stand for, which runs of words spell a symptom, and how far to widen when too little
 * matches.
 *
 *  1. Each term becomes a slot of alternatives: the term itself; for the last, still-typed
 *     term, a prefix search (plus the stems a half-typed suffix is heading to); for a term the
 *     index has never seen and that is longer than 4 characters, spelling corrections from the
 *     dictionary of indexed words (edit distance 1, or 2 above 8 characters).
 *  2. Runs of terms that spell a vocabulary symptom name or synonym are recognised; the run
 *     may then also match the symptom's key, so "buzz" finds procedures filed under "Hums".
 *     A negation carries no symptom: it counts inside such a run ("does not dim") and is no
 *     search term anywhere else, so "not" or "nothing" alone finds nothing.
 *  3. All slots must match (the index evaluates them rarest first). When that leaves fewer
 *     than THIN_RESULT hits, corrections are tried for every long term (a typo can be a real
 *     word), then one term may be missing, then half of them; procedures naming a model code
 *     of the query ("VR-240") then count as matches too.
 */
import { maxEdits, type SpellingDictionary } from './analysis'
import { BODY_FIELD, SHORT_PREFIX_FIELDS, WORD_FIELDS } from './fields'
import { NEGATION_TERM, completionStems, type ParsedQuery } from './query'
import type { PhraseSlot, SymptomPhrases, SymptomSpan } from './symptom-phrases'
import type { MatchNode, ScoredDocument, TermIndex } from './term-index'

/** Fewer all-terms hits than this and the search widens (corrections, then fewer terms). */
const THIN_RESULT = 3
/** A negation alone says little ("not" is everywhere in procedure text); it refines. */
const NEGATION_WEIGHT = 0.5
/**
 * Where a negation inside a symptom phrase is looked for: not in body text, where "do not
 * touch" and "no load" are in every other sentence.
 */
const NEGATION_FIELDS: readonly string[] = WORD_FIELDS.filter(f => f !== BODY_FIELD)
/** Completing a word of one or two letters would walk a large part of the term tree for little. */
const MIN_PREFIX_LENGTH = 3
/** Below this length a word being typed is completed outside body text only. */
const SHORT_PREFIX_LENGTH = 4

type Alternative = { term: string, prefix: boolean, weight: number, fields: readonly string[] }
/**
 * One query term and what it may match; `insignificant`: too common to search for; `filler`:
 * it carries no symptom (a negation), so it only counts inside a symptom phrase.
 */
type Slot = PhraseSlot & { word: string, alternatives: Alternative[], insignificant: boolean, filler: boolean }

/** One evaluation of the plan: its top-level groups and how many of them a document must match. */
export type PlanRound = { groups: MatchNode[], minMatch: number }

export type TextMatch = {
  results: ScoredDocument[]
  /** Every group evaluated, for highlighting: a document's matched terms are looked up in it. */
  plan: MatchNode[]
  mode: 'all' | 'partial'
  detectedSymptoms: string[]
  /** The round whose results these are (null: none had any). */
  round: PlanRound | null
}

export class QueryPlanner {
  constructor(
    protected readonly index: TermIndex,
    protected readonly spelling: SpellingDictionary,
    protected readonly phrases: SymptomPhrases,
  ) {}

  /**
   * The documents matching a query's text, by the widening steps of the module comment.
   *
   * @example planner.match(parseQuery('buzz when dimmed low')) // { mode: 'all', detectedSymptoms: ['hum-noise'], … }
   */
  match(parsed: ParsedQuery): TextMatch {
    const plan: MatchNode[] = []
    let round: PlanRound | null = null
    const run = (groups: MatchNode[] | null, minMatch: number): ScoredDocument[] => {
      if (!groups || groups.length === 0) return []
      plan.push(...groups)
      return this.index.matchGroups(groups, minMatch)
    }
    const keep = (found: ScoredDocument[], groups: MatchNode[], minMatch: number): ScoredDocument[] => {
      round = { groups, minMatch }
      return found
    }
    let slots = this.resolveSlots(parsed, false)
    let spans = this.phrases.detectSpans(slots)
    let groups = this.planGroups(slots, spans, 'all')
    let results = groups ? keep(run(groups, groups.length), groups, groups.length) : []
    let mode: TextMatch['mode'] = 'all'
    if (results.length < THIN_RESULT) {
      // A typo can be a real word ("sitting" for "setting"): try corrections for every long term.
      if (slots.some(s => maxEdits(s.word) > 0 && s.alternatives.some(a => a.term === s.term))) {
        slots = this.resolveSlots(parsed, true)
        spans = this.phrases.detectSpans(slots)
        groups = this.planGroups(slots, spans, 'all')
        const more = groups ? run(groups, groups.length) : []
        if (more.length > results.length) results = keep(more, groups!, groups!.length)
      }
      if (results.length < THIN_RESULT) {
        // One term short first (cheap: only the two cheapest groups are scored in full), then
        // half of them.
        const partial = this.planGroups(slots, spans, 'partial')!
        const levels = partial.length <= 1 ? [1] : [...new Set([partial.length - 1, Math.ceil(partial.length / 2)])]
        for (const minMatch of levels) {
          const found = run(partial, minMatch)
          if (found.length > results.length) {
            results = keep(found, partial, minMatch)
            mode = 'partial'
          }
          if (results.length >= THIN_RESULT) break
        }
      }
    }
    if (mode === 'partial' && parsed.codes.length > 0) results = this.withNamedModels(results, parsed.codes, plan)
    if (results.length === 0) round = null
    const detectedSymptoms = [...new Set(spans.flatMap(s => s.slugs))].sort()
    return { results, plan, mode, detectedSymptoms, round }
  }

  /**
   * When no procedure matched every word, the ones naming a model code of the query count as
   * matches too (scored by the code alone): "vr240 dead" must offer the VR-240 procedures even
   * when none of them says "dead". Their place in the list is the ranking's to decide.
   */
  protected withNamedModels(results: ScoredDocument[], codes: readonly string[], plan: MatchNode[]): ScoredDocument[] {
    const nodes: MatchNode[] = codes.filter(code => this.index.hasTerm(code)).map(code => ({ kind: 'term', term: code, prefix: false, weight: 1, fields: WORD_FIELDS }))
    if (nodes.length === 0) return results
    plan.push(...nodes)
    const seen = new Set(results.map(r => r.short))
    return [...results, ...this.index.matchGroups(nodes, 1).filter(r => !seen.has(r.short))]
  }

  protected resolveSlots(parsed: ParsedQuery, correctKnownTerms: boolean): Slot[] {
    const index = this.index
    const slots: Slot[] = []
    parsed.terms.forEach((term, i) => {
      const word = parsed.words[i]!
      const isPrefix = parsed.lastTermIsPrefix && i === parsed.terms.length - 1 && term.length >= MIN_PREFIX_LENGTH
      const base = term === NEGATION_TERM ? NEGATION_WEIGHT : 1
      const alternatives: Array<Omit<Alternative, 'fields'>> = []
      const known = index.hasTerm(term)
      if (isPrefix) {
        const prefixHits = index.hasTermWithPrefix(term)
        if (prefixHits) alternatives.push({ term, prefix: true, weight: base })
        // A half-typed suffix ("flickeri", "dimm"): also look for the stem it is heading to;
        // as a prefix only when the word itself leads nowhere, to avoid counting a match twice.
        for (const stem of completionStems(word)) {
          if (stem === term) continue
          if (!prefixHits && index.hasTermWithPrefix(stem)) alternatives.push({ term: stem, prefix: true, weight: base })
          else if (prefixHits && index.hasTerm(stem)) alternatives.push({ term: stem, prefix: false, weight: base })
        }
      }
      else if (known) {
        alternatives.push({ term, prefix: false, weight: base })
      }
      if ((!known || correctKnownTerms) && !(isPrefix && alternatives.length > 0)) {
        for (const c of this.spelling.corrections(word, term)) if (index.hasTerm(c.term)) alternatives.push({ term: c.term, prefix: false, weight: c.weight * base })
      }
      const candidates = new Set<string>([term])
      for (const a of alternatives) if (!a.prefix) candidates.add(a.term)
      const resolved: Alternative[] = []
      const filler = term === NEGATION_TERM
      for (const a of dedupeAlternatives(alternatives)) {
        const fields = filler ? NEGATION_FIELDS : a.prefix ? (a.term.length < SHORT_PREFIX_LENGTH ? SHORT_PREFIX_FIELDS : WORD_FIELDS) : index.fieldsFor(a.term, WORD_FIELDS)
        if (fields) resolved.push({ ...a, fields })
      }
      // Every way of matching the term was too common to mean anything: it is left out of
      // the plan (though it still spells symptom names), unless nothing else is left.
      const insignificant = alternatives.length > 0 && resolved.length === 0
      const prefixes = alternatives.filter(a => a.prefix).map(a => a.term)
      slots.push({ term, word, prefix: isPrefix, alternatives: insignificant ? [] : resolved, candidates, prefixes, insignificant, filler })
    })
    const carrying = slots.filter(s => !s.filler)
    if (carrying.length > 0 && carrying.every(s => s.insignificant)) {
      for (const s of carrying) {
        s.insignificant = false
        s.alternatives = [{ term: s.term, prefix: s.prefix, weight: 1, fields: WORD_FIELDS }]
      }
    }
    return slots
  }

  /**
   * A word still being typed that completes a recognised symptom phrase is read as the
   * phrase's word: "does not dim" means dim, not "dimmer" or "dimmable". Its exact
   * alternatives stay (a half-typed "dimm" is heading for "dim"), and the prefix itself counts
   * as a whole word where the index has it.
   */
  protected asPhraseWord(slot: Slot): Slot {
    if (!slot.prefix) return slot
    const alternatives: Alternative[] = []
    for (const a of slot.alternatives) {
      if (!a.prefix) alternatives.push(a)
      else if (this.index.hasTerm(a.term)) {
        const fields = this.index.fieldsFor(a.term, WORD_FIELDS)
        if (fields) alternatives.push({ ...a, prefix: false, fields })
      }
    }
    return alternatives.length > 0 ? { ...slot, alternatives: dedupeAlternatives(alternatives) } : slot
  }

  /**
   * Top-level groups of a plan. For `all`, a recognised symptom run is one group (its words
   * together, or its symptom key); for `partial`, every word and every run's key count
   * separately towards the minimum match. Returns null when an all-terms match is impossible
   * (a term that matches nothing).
   */
  protected planGroups(slots: Slot[], spans: SymptomSpan[], shape: 'all' | 'partial'): MatchNode[] | null {
    const groups: MatchNode[] = []
    const seen = new Set<string>()
    let i = 0
    let spanIndex = 0
    while (i < slots.length) {
      const span = spans[spanIndex]
      if (span && span.start === i) {
        const spanSlots = slots.slice(span.start, span.end)
        const key = symptomKeyNode(span.slugs)
        if (shape === 'partial') {
          for (const slot of spanSlots) {
            const dedupeKey = `${slot.term}|${slot.prefix}`
            if (slot.insignificant || slot.filler || seen.has(dedupeKey)) continue
            seen.add(dedupeKey)
            const node = slotNode(slot)
            if (node) groups.push(node)
          }
          groups.push(key)
        }
        else {
          // A word the run repeats ("low … at low setting") counts once; negations alone are
          // no description of the symptom.
          const distinct = spanSlots.filter((slot, k) => !slot.insignificant && spanSlots.findIndex(o => o.term === slot.term && o.prefix === slot.prefix) === k)
          const inner = distinct.map(slot => slotNode(this.asPhraseWord(slot)))
          const described = distinct.some(slot => !slot.filler)
          const words: MatchNode | null = described && inner.every(n => n !== null) ? { kind: 'and', children: inner as MatchNode[] } : null
          groups.push(words ? { kind: 'or', children: [words, key] } : key)
        }
        i = span.end
        spanIndex++
        continue
      }
      const slot = slots[i]!
      i++
      if (slot.insignificant || slot.filler) continue
      // "flicker flicker flicker" is one term, not three times the weight.
      const dedupeKey = `${slot.term}|${slot.prefix}`
      if (seen.has(dedupeKey)) continue
      seen.add(dedupeKey)
      const node = slotNode(slot)
      if (node) groups.push(node)
      else if (shape === 'all') return null
    }
    return groups
  }
}

function slotNode(slot: Slot): MatchNode | null {
  if (slot.alternatives.length === 0) return null
  const nodes: MatchNode[] = slot.alternatives.map(a => ({ kind: 'term', term: a.term, prefix: a.prefix, weight: a.weight, fields: a.fields }))
  return nodes.length === 1 ? nodes[0]! : { kind: 'or', children: nodes }
}

function symptomKeyNode(slugs: string[]): MatchNode {
  const nodes: MatchNode[] = slugs.map(slug => ({ kind: 'term', term: slug, prefix: false, weight: 1, fields: ['symptomKey'] }))
  return nodes.length === 1 ? nodes[0]! : { kind: 'or', children: nodes }
}

function dedupeAlternatives<A extends { term: string, prefix: boolean, weight: number }>(alternatives: A[]): A[] {
  const byTerm = new Map<string, A>()
  for (const a of alternatives) {
    const prev = byTerm.get(a.term)
    if (!prev || (a.prefix && !prev.prefix) || (a.prefix === prev.prefix && a.weight > prev.weight)) byTerm.set(a.term, a)
  }
  return [...byTerm.values()]
}
