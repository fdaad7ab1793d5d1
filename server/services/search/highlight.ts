/**
 * Why a procedure matched, in its own words: the matched words of its symptoms, title, causes
 * and step titles, and the stretch of its text with the most of them, as plain-text parts.
 */
import { LRUCache } from 'lru-cache'
import { NEGATION_TERM, hyphenatedCodeSpans, wordSpans } from './query'
import type { SearchDocument, SearchHighlight, SearchSnippetPart } from './types'

const MAX_HIGHLIGHTS = 5
const TEXT_WINDOW_CHARS = 180
const TEXT_LEAD_CHARS = 50
const MAX_TEXT_MATCHES = 200

/** Index term → the fields of the document it matched in. */
export type MatchedTerms = Readonly<Record<string, readonly string[]>>

export class Highlighter {
  /**
   * Highlight patterns by matched-term set: the hits of one search mostly share theirs. A pure
   * function of the terms, so nothing needs emptying it; bounded by count.
   */
  protected readonly patterns = new LRUCache<string, { pattern: RegExp | null }>({ max: 1000 })

  /** `term`: the index term of a word, as the index made it. */
  constructor(protected readonly term: (word: string) => string | null) {}

  /**
   * The highlights of one hit: a whole symptom name when its key matched, else its matched
   * words; the title; up to two causes and two step titles; the best window of the text.
   *
   * @example highlighter.highlightsFor(doc, { flicker: ['symptoms', 'text'] })
   */
  highlightsFor(doc: SearchDocument, match: MatchedTerms): SearchHighlight[] {
    const matched = new Set(Object.keys(match))
    const out: SearchHighlight[] = []
    const whole = (field: SearchHighlight['field'], parts: SearchSnippetPart[] | null): void => {
      if (parts) out.push({ field, snippet: parts, clippedStart: false, clippedEnd: false })
    }
    for (const s of doc.symptoms) {
      if (match[s.slug]?.includes('symptomKey')) whole('symptom', [{ text: s.name, match: true }])
      else whole('symptom', this.markWords(s.name, matched))
    }
    whole('title', this.markWords(doc.title, matched))
    const firstTwo = (field: 'cause' | 'step', texts: string[]): void => {
      let n = 0
      for (const t of texts) {
        if (n === 2) break
        const parts = this.markWords(t, matched)
        if (parts) {
          whole(field, parts)
          n++
        }
      }
    }
    firstTwo('cause', doc.causes.map(c => c.name))
    firstTwo('step', doc.stepTitles)
    const inText = new Set(Object.keys(match).filter(term => match[term]!.includes('text')))
    const w = this.textWindow(doc.text, inText)
    if (w) out.push(w)
    return out.slice(0, MAX_HIGHLIGHTS)
  }

  /**
   * Splits a short field value into plain-text parts, marking the words that matched, and a
   * hyphenated code ("VR-240") as one when its joined form did.
   */
  protected markWords(text: string, matched: Set<string>): SearchSnippetPart[] | null {
    const codes = hyphenatedCodesIn(text, matched)
    const ranges: Array<{ start: number, end: number }> = [...codes]
    for (const span of wordSpans(text)) {
      if (codes.some(c => span.start < c.end && span.end > c.start)) continue
      const term = this.term(span.word)
      if (term !== null && matched.has(term)) ranges.push(span)
    }
    if (ranges.length === 0) return null
    ranges.sort((a, b) => a.start - b.start)
    const parts: SearchSnippetPart[] = []
    let cursor = 0
    for (const r of ranges) {
      if (r.start > cursor) parts.push({ text: text.slice(cursor, r.start), match: false })
      parts.push({ text: text.slice(r.start, r.end), match: true })
      cursor = r.end
    }
    if (cursor < text.length) parts.push({ text: text.slice(cursor), match: false })
    return parts
  }

  /**
   * The stretch of long text with the most distinct matched terms, split into parts. Words are
   * found by the matched stems (a stem begins its inflected forms, bar y → ies) and each
   * candidate is confirmed through the index's own term function, so only real matches are
   * marked and the rest of the text is never tokenised.
   */
  protected textWindow(text: string, matched: Set<string>): SearchHighlight | null {
    // Lowercased once, the text is searched without case folding (offsets unchanged unless a
    // character's lowercase is longer, as with "İ"; then fold instead).
    const lower = text.toLowerCase()
    const found: Array<{ start: number, end: number, term: string }> = []
    const offer = (start: number, end: number): boolean => {
      const term = this.term(text.slice(start, end))
      if (term !== null && matched.has(term)) found.push({ start, end, term })
      return found.length < MAX_TEXT_MATCHES
    }
    if (lower.length === text.length) {
      // The words that begin with a matched stem, found with indexOf: the same words the
      // pattern finds (`buildHighlightPattern`), several times faster on long text.
      for (const [start, end] of stemWords(lower, highlightStems(matched))) if (!offer(start, end)) break
    }
    else {
      const pattern = this.pattern(matched)
      if (!pattern) return null
      for (const m of text.matchAll(pattern)) if (!offer(m.index, m.index + m[0].length)) break
    }
    for (const c of hyphenatedCodesIn(text, matched)) {
      if (found.some(f => f.start < c.end && f.end > c.start)) continue
      found.push({ start: c.start, end: c.end, term: c.code })
    }
    if (found.length === 0) return null
    found.sort((a, b) => a.start - b.start)
    let best = 0
    let bestDistinct = 0
    for (let i = 0; i < found.length; i++) {
      const distinct = new Set<string>()
      for (let j = i; j < found.length && found[j]!.end - found[i]!.start <= TEXT_WINDOW_CHARS; j++) distinct.add(found[j]!.term)
      if (distinct.size > bestDistinct) {
        bestDistinct = distinct.size
        best = i
      }
    }
    const from = wordStartAtOrAfter(text, Math.max(0, found[best]!.start - TEXT_LEAD_CHARS), found[best]!.start)
    const to = wordEndAtOrBefore(text, Math.min(text.length, from + TEXT_WINDOW_CHARS), found[best]!.end)
    const parts: SearchSnippetPart[] = []
    let cursor = from
    for (const f of found) {
      if (f.start < from || f.end > to) continue
      if (f.start > cursor) parts.push({ text: text.slice(cursor, f.start), match: false })
      parts.push({ text: text.slice(f.start, f.end), match: true })
      cursor = f.end
    }
    if (to > cursor) parts.push({ text: text.slice(cursor, to), match: false })
    return { field: 'text', snippet: parts, clippedStart: from > 0, clippedEnd: to < text.length }
  }

  protected pattern(terms: Set<string>): RegExp | null {
    const sorted = [...terms].sort()
    const key = sorted.join(' ')
    let entry = this.patterns.get(key)
    if (!entry) this.patterns.set(key, (entry = { pattern: buildHighlightPattern(sorted, true) }))
    if (entry.pattern) entry.pattern.lastIndex = 0
    return entry.pattern
  }
}

/** The hyphenated codes of a text whose joined form is among the matched terms. */
function hyphenatedCodesIn(text: string, matched: Set<string>): Array<{ code: string, start: number, end: number }> {
  if (!/[-‐‑–]/.test(text) || ![...matched].some(t => /\d/.test(t))) return []
  return hyphenatedCodeSpans(text).filter(c => matched.has(c.code))
}

/**
 * What a word must begin with to index to one of the terms (confirmed afterwards): the stem,
 * bar a final y (y → ies). Negations are left out of body text: "not" is in every other
 * sentence there.
 */
export function highlightStems(terms: Iterable<string>): Set<string> {
  const stems = new Set<string>()
  for (const term of terms) if (term !== NEGATION_TERM) stems.add(term.length > 3 && term.endsWith('y') ? term.slice(0, -1) : term)
  return stems
}

const WORD_CHAR = /[\p{L}\p{N}]/u
function isWordCharAt(text: string, at: number): boolean {
  const c = text.charCodeAt(at)
  if (c < 128) return (c >= 48 && c <= 57) || (c >= 65 && c <= 90) || (c >= 97 && c <= 122)
  // A letter outside the BMP is two code units; either half stands for the whole.
  if (c >= 0xd800 && c <= 0xdfff) return WORD_CHAR.test(c <= 0xdbff ? text.slice(at, at + 2) : text.slice(at - 1, at + 1))
  return WORD_CHAR.test(text[at]!)
}

/** The end of a word from `at`: letters and digits, then any run of apostrophe + letters (it's, o’clock). */
function wordEndFrom(text: string, at: number): number {
  let i = at
  while (i < text.length && isWordCharAt(text, i)) i++
  for (;;) {
    const c = text[i]
    if ((c === '\'' || c === '’' || c === 'ʼ') && i + 1 < text.length && isWordCharAt(text, i + 1)) {
      i++
      while (i < text.length && isWordCharAt(text, i)) i++
    }
    else return i
  }
}

/**
 * Where the words beginning with one of the stems are in lowercase text, left to right and not
 * overlapping: the matches of `buildHighlightPattern(stems)`, found with indexOf.
 *
 * @example stemWords('the dimmer flickers', new Set(['flicker'])) // [[11, 19]]
 */
export function stemWords(lower: string, stems: Set<string>): Array<[number, number]> {
  const starts = new Map<number, number>()
  for (const stem of stems) {
    if (stem === '') continue
    for (let at = lower.indexOf(stem); at >= 0; at = lower.indexOf(stem, at + 1)) {
      if (at > 0 && isWordCharAt(lower, at - 1)) continue
      if (!starts.has(at)) starts.set(at, wordEndFrom(lower, at + stem.length))
    }
  }
  const out: Array<[number, number]> = []
  let scanned = 0
  for (const start of [...starts.keys()].sort((a, b) => a - b)) {
    if (start < scanned) continue
    const end = starts.get(start)!
    out.push([start, end])
    scanned = end
  }
  return out
}

function escapeRegExp(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')
}

/** The pattern form of `highlightStems`, for text whose lowercase changes its length. */
export function buildHighlightPattern(terms: Iterable<string>, foldCase: boolean): RegExp | null {
  const alternatives = new Set<string>()
  for (const stem of highlightStems(terms)) alternatives.add(escapeRegExp(stem))
  if (alternatives.size === 0) return null
  const body = [...alternatives].sort((a, b) => b.length - a.length).join('|')
  return new RegExp(`(?<![\\p{L}\\p{N}])(?:${body})[\\p{L}\\p{N}]*(?:['’ʼ][\\p{L}\\p{N}]+)*`, foldCase ? 'giu' : 'gu')
}

function isWordChar(c: string | undefined): boolean {
  return c !== undefined && /[\p{L}\p{N}]/u.test(c)
}

/** The first word start at or after `pos` (not beyond `limit`): snippets do not begin mid-word. */
function wordStartAtOrAfter(text: string, pos: number, limit: number): number {
  let i = pos
  while (i > 0 && i < limit && isWordChar(text[i - 1])) i++
  return i
}

/** The last word end at or before `pos` (not before `limit`): snippets do not end mid-word. */
function wordEndAtOrBefore(text: string, pos: number, limit: number): number {
  let i = pos
  while (i < text.length && i > limit && isWordChar(text[i])) i--
  return i
}
