/**
 * The symptom vocabulary as search reads it: every name and synonym as a run of index terms, to
 * recognise a symptom spelt out in a query ("stuck at full brightness" is "Does not dim"), and a
 * small MiniSearch index of the same phrases for "did you mean" suggestions.
 */
import MiniSearch, { type Query } from 'minisearch'
import { maxEdits } from './analysis'
import { NEGATION_TERM, normaliseWord, toIndexTerm, tokenizeWords, type ParsedQuery } from './query'
import type { SymptomVocabularyEntry } from './types'

/** What span detection needs to know of one query term. */
export type PhraseSlot = {
  term: string
  /** Still being typed: it may stand for any phrase term it begins. */
  prefix: boolean
  /** Index terms it may stand for (itself, its corrections). */
  candidates: ReadonlySet<string>
  /** When still being typed: the beginnings it is completed from (itself, or the stem a half-typed suffix heads to). */
  prefixes: readonly string[]
}

/** Query terms [start, end) that spell one of these symptoms' names or synonyms. */
export type SymptomSpan = { start: number, end: number, slugs: string[] }

type Phrase = { terms: string[], slug: string }
type PhraseEntry = { id: number, slug: string, phrase: string, isName: boolean }

/** A symptom whose name or synonym a typed text matches; `via`: the synonym, when the name did not match. */
export type SymptomMatch = { slug: string, via: string | null }

const MAX_SUGGESTIONS = 5

export class SymptomPhrases {
  protected readonly byFirstTerm = new Map<string, Phrase[]>()
  protected readonly all: Phrase[] = []
  protected readonly names = new Map<string, string>()
  protected readonly suggestionIndex: MiniSearch<PhraseEntry>

  constructor(symptoms: Iterable<SymptomVocabularyEntry>) {
    const entries: PhraseEntry[] = []
    for (const s of symptoms) {
      this.names.set(s.slug, s.name)
      for (const phrase of [s.name, ...s.synonyms]) {
        entries.push({ id: entries.length, slug: s.slug, phrase, isName: phrase === s.name })
        const terms = tokenizeWords(phrase)
          .map(t => toIndexTerm(t))
          .filter((t): t is string => t !== null)
        // A phrase of negations alone ("nothing", "none") would make every "not" this symptom.
        if (terms.every(t => t === NEGATION_TERM)) continue
        const p = { terms, slug: s.slug }
        this.all.push(p)
        const list = this.byFirstTerm.get(terms[0]!)
        if (list) list.push(p)
        else this.byFirstTerm.set(terms[0]!, [p])
      }
    }
    this.suggestionIndex = new MiniSearch<PhraseEntry>({
      fields: ['phrase'],
      storeFields: ['slug', 'phrase', 'isName'],
      tokenize: text => tokenizeWords(text),
      // Both the stem and the word itself, so a typo is measured against what was written.
      processTerm: (token) => {
        const term = toIndexTerm(token)
        if (term === null) return null
        const word = normaliseWord(token)
        return word !== term && term !== NEGATION_TERM ? [term, word] : term
      },
      searchOptions: { tokenize: term => [term], processTerm: term => term },
    })
    this.suggestionIndex.addAll(entries)
  }

  /**
   * Runs of query terms that spell a symptom name or synonym: longest first, left to right.
   *
   * @example phrases.detectSpans(slots of "buzz when dimmed") // [{ start: 0, end: 1, slugs: ['hum-noise'] }]
   */
  detectSpans(slots: readonly PhraseSlot[]): SymptomSpan[] {
    const spans: SymptomSpan[] = []
    for (let i = 0; i < slots.length; i++) {
      let bestLength = 0
      let bestSlugs = new Set<string>()
      const consider = (phrase: Phrase): void => {
        const n = phrase.terms.length
        if (n > slots.length - i || n < bestLength) return
        for (let j = 0; j < n; j++) if (!slotSpells(slots[i + j]!, phrase.terms[j]!)) return
        if (n > bestLength) {
          bestLength = n
          bestSlugs = new Set()
        }
        bestSlugs.add(phrase.slug)
      }
      const slot = slots[i]!
      if (slot.prefix) for (const p of this.all) consider(p)
      else for (const c of slot.candidates) for (const p of this.byFirstTerm.get(c) ?? []) consider(p)
      if (bestLength > 0) {
        spans.push({ start: i, end: i + bestLength, slugs: [...bestSlugs].sort() })
        i += bestLength - 1
      }
    }
    return spans
  }

  /**
   * Symptoms whose name or synonym is nearest to the query's words (typos and half-typed words
   * allowed), best first: the "did you mean" of a search.
   *
   * @example phrases.suggest(parseQuery('flikers ')) // [{ slug: 'flicker', name: 'Flickers' }]
   */
  suggest(parsed: ParsedQuery): Array<{ slug: string, name: string }> {
    if (this.names.size === 0 || parsed.terms.length === 0) return []
    const seen = new Set<string>()
    const out: Array<{ slug: string, name: string }> = []
    for (const r of this.suggestionIndex.search({ combineWith: 'OR', queries: wordQueries(parsed).flat() })) {
      const slug = r.slug as string
      if (seen.has(slug)) continue
      seen.add(slug)
      const name = this.names.get(slug)
      if (name !== undefined) out.push({ slug, name })
      if (out.length === MAX_SUGGESTIONS) break
    }
    return out
  }

  /**
   * Symptoms with a name or synonym that has every typed word, allowing typos and a half-typed
   * last word as search does, best first: what a symptom picker lists as the author types.
   *
   * @example phrases.match(parseQuery('flikker')) // [{ slug: 'flicker', via: null }]
   * @example phrases.match(parseQuery('stuck at ful')) // [{ slug: 'does-not-dim', via: 'stuck at full brightness' }]
   */
  match(parsed: ParsedQuery): SymptomMatch[] {
    if (parsed.terms.length === 0) return []
    const queries: Query[] = wordQueries(parsed).map(alternatives => ({ combineWith: 'OR', queries: alternatives }))
    const order: string[] = []
    const via = new Map<string, string | null>()
    for (const r of this.suggestionIndex.search({ combineWith: 'AND', queries })) {
      const slug = r.slug as string
      if (!via.has(slug)) order.push(slug)
      if (r.isName) via.set(slug, null)
      else if (!via.has(slug)) via.set(slug, r.phrase as string)
    }
    return order.map(slug => ({ slug, via: via.get(slug) ?? null }))
  }
}

/**
 * The queries for each typed word: its term and, when they differ, the word as written (a typo
 * is measured against what was written); fuzzy from 4 letters, prefix for a half-typed last word.
 */
function wordQueries(parsed: ParsedQuery): Query[][] {
  return parsed.terms.map((term, i) => {
    const word = parsed.words[i]!
    const prefix = parsed.lastTermIsPrefix && i === parsed.terms.length - 1 && term.length >= 3
    // The vocabulary is a few hundred phrases: fuzzy from 4 letters costs nothing here.
    const edits = (w: string): number => (w.length >= 4 ? Math.max(1, maxEdits(w)) : 0)
    const queries: Query[] = [{ queries: [term], prefix, fuzzy: edits(term) }]
    if (word !== term && term !== NEGATION_TERM) queries.push({ queries: [word], prefix, fuzzy: edits(word) })
    return queries
  })
}

function slotSpells(slot: PhraseSlot, phraseTerm: string): boolean {
  if (slot.candidates.has(phraseTerm)) return true
  return slot.prefix && [slot.term, ...slot.prefixes].some(p => p.length >= 3 && phraseTerm.startsWith(p))
}
