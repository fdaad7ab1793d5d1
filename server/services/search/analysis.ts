/**
 * From the text of a procedure to index terms, and the spelling dictionary that typo correction
 * draws on. The term of a token is `toIndexTerm` (./query), the same function queries go
 * through, so whatever meets on one side meets on the other.
 */
import { LRUCache } from 'lru-cache'
import SearchableMap from 'minisearch/SearchableMap'
import { NEGATION_TERM, joinedCodes, normaliseWord, toIndexTerm, tokenizeWords } from './query'

/** Corrections offered for one misspelt word, nearest first. */
const MAX_CORRECTIONS = 5
/** Same shape as MiniSearch's fuzzy weighting: 0.45 · len / (len + distance). */
const CORRECTION_WEIGHT = 0.45

/** A field's words, then the hyphenated codes it writes ("IRF-840" is also IRF840). */
export function rawTokens(text: string): string[] {
  const tokens = tokenizeWords(text)
  if (text.includes('-') || text.includes('‑') || text.includes('–') || text.includes('‐')) for (const code of joinedCodes(text)) tokens.push(code)
  return tokens
}

/** Edit distance allowed for a word: none up to 4 characters, 1 up to 8, then 2. */
export function maxEdits(word: string): number {
  return word.length > 8 ? 2 : word.length > 4 ? 1 : 0
}

/** An indexed word a misspelling may stand for, with the weight of matching it instead. */
export type Correction = { term: string, weight: number }

/**
 * The words the library has indexed (normalised, at least 4 letters, no digits), each with its
 * index term: what a misspelt query word is corrected to. Words are only ever added; a word
 * whose procedures are gone leads to a term the index no longer has, which the planner skips.
 */
export class SpellingDictionary {
  protected readonly words = new SearchableMap<string>()

  /** Files a word seen in a document, with its index term. */
  learn(token: string, term: string): void {
    // Words only: "correcting" IRF640 to IRF840 or R12 to R21 would name another part.
    if (term === NEGATION_TERM || /[\d'’]/.test(token)) return
    const word = normaliseWord(token)
    if (word.length >= 4 && !this.words.has(word)) this.words.set(word, term)
  }

  /**
   * Index terms within `maxEdits(word)` edits of the word (a swap of neighbours counts as one,
   * as Damerau has it), nearest first, weighted as MiniSearch weighs fuzzy matches. `exclude`:
   * the word's own term.
   *
   * @example dictionary.corrections('flikers', 'fliker') // [{ term: 'flicker', weight: 0.39 }]
   */
  corrections(word: string, exclude: string): Correction[] {
    const edits = maxEdits(word)
    if (edits === 0) return []
    const best = new Map<string, number>()
    const offer = (term: string, distance: number): void => {
      if (term === exclude || distance === 0) return
      const prev = best.get(term)
      if (prev === undefined || distance < prev) best.set(term, distance)
    }
    for (const [, [term, distance]] of this.words.fuzzyGet(word, edits)) offer(term, distance)
    // Swapped neighbours ("charegr") are the commonest slip at a keyboard, but two edits to
    // Levenshtein.
    for (let i = 0; i + 1 < word.length; i++) {
      if (word[i] === word[i + 1]) continue
      const term = this.words.get(word.slice(0, i) + word[i + 1] + word[i] + word.slice(i + 2))
      if (term !== undefined) offer(term, 1)
    }
    return [...best]
      .sort((a, b) => a[1] - b[1] || a[0].localeCompare(b[0]))
      .slice(0, MAX_CORRECTIONS)
      .map(([term, distance]) => ({ term, weight: (CORRECTION_WEIGHT * term.length) / (term.length + distance) }))
  }
}

/**
 * Turns tokens into index terms, remembering each answer, and files every new word in the
 * spelling dictionary as it goes.
 */
export class TermAnalyser {
  readonly spelling = new SpellingDictionary()
  /**
   * Term by token ('' for none). A pure function of the token, so nothing needs emptying it;
   * the bound keeps a stream of unique junk tokens from growing it without end.
   */
  protected readonly cache = new LRUCache<string, string>({ max: 200_000 })

  /**
   * The index term of a token, or null when it is not worth indexing.
   *
   * @example analyser.term('Flickering') // 'flicker'
   */
  term(token: string): string | null {
    const cached = this.cache.get(token)
    if (cached !== undefined) return cached === '' ? null : cached
    const term = toIndexTerm(token)
    this.cache.set(token, term ?? '')
    if (term !== null) this.spelling.learn(token, term)
    return term
  }
}
