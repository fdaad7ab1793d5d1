/**
 * Turning what a technician types, and what a procedure says, into the same search terms.
 *
 * Index and query go through the same `toIndexTerm`, so whatever normalisation happens here
 * (case, accents, contractions, stop words, suffixes) happens identically on both sides;
 * a term that meets on one side meets on the other.
 */

/** What a query may cost us: anything longer is cut, never rejected. */
export const QUERY_LIMITS = {
  /** Characters looked at before any work; bounds the cost of a pasted 10 kB blob. */
  scanChars: 1000,
  /** Characters kept after normalisation. */
  maxChars: 200,
  /** Search terms kept. */
  maxTerms: 12,
  /** Longer tokens are identifiers, hashes or junk, not words anyone searches for. */
  maxTermLength: 40,
} as const

/** Canonical form of every negation, so "won't dim", "doesn't dim" and "no dimming" meet. */
export const NEGATION_TERM = 'not'

/** A run of letters/digits, optionally joined by apostrophes (won't, driver's). */
const WORD_PATTERN = /[\p{L}\p{N}]+(?:['’ʼ][\p{L}\p{N}]+)*/gu
const NON_ASCII = /[^\u0000-\u007F]/ // eslint-disable-line no-control-regex -- the ASCII range, not a control character
const APOSTROPHES = /[’‘ʼ`´′]/g
const COMBINING_MARKS = /\p{M}+/gu
const DIGIT = /\d/
const VOWEL = /[aeiouy]/

/**
 * English function words that carry no diagnostic meaning (common practice: the usual short
 * English stop list). Deliberately NOT here: negations (mapped to "not"), and the particles
 * the trade leans on: on/off/up/down/out/over/under/low/high ("won't turn on", "shuts down",
 * "under load").
 */
const STOP_WORDS = new Set(
  (
    'a an the and or but if then else when whenever while at by for with about against between into through during before after '
    + 'to from in of as until because so than too very just only also again further once here there all any both each few more most '
    + 'other some such own same s t can will would could should shall may might must i me my we our us you your he him his she her '
    + 'it its they them their what which who whom whose this that these those am is are was were be been being have has had having '
    + 'do does did doing get gets got getting keep keeps kept please help how why where really still even like'
  ).split(' '),
)

/** Words read as "not" (besides any word ending in n't). */
const NEGATION_WORDS: readonly string[] = [
  'no', 'not', 'never', 'none', 'nothing', 'cannot', 'nor',
  // apostrophe-less contractions as typed at the bench
  'dont', 'doesnt', 'didnt', 'wont', 'cant', 'isnt', 'arent', 'wasnt', 'werent', 'wouldnt', 'couldnt',
  'shouldnt', 'hasnt', 'havent', 'hadnt', 'aint', 'neednt', 'mustnt',
]
const NEGATIONS = new Set(NEGATION_WORDS)

/** Clitics dropped from the end of a word: driver's → driver, it'll → it. */
const CLITIC = /'(?:s|ll|re|ve|d|m)$/

/** Raw word tokens of a text, in order. Punctuation and control characters separate words. */
export function tokenizeWords(text: string): string[] {
  return text.match(WORD_PATTERN) ?? []
}

// A model or part code written with a hyphen (VR-240, PX-10L, USB-C) is also typed without one.
/** The definition; `joinedCodes` gives the same matches without running it over the whole text. */
export const HYPHENATED_CODE = /(?:^|[^\p{L}\p{N}])(\p{L}+)[-‐‑–](\p{N}[\p{L}\p{N}]*|\p{L})(?![\p{L}\p{N}])/gu
const HYPHEN = /[-‐‑–]/g
const SURROGATE = /[\uD800-\uDFFF]/
const ANY_LETTER = /\p{L}/u
const ANY_DIGIT = /\p{N}/u

function isLetter(c: number, text: string, at: number): boolean {
  if (c < 128) return (c >= 65 && c <= 90) || (c >= 97 && c <= 122)
  return ANY_LETTER.test(text[at]!)
}
function isDigit(c: number, text: string, at: number): boolean {
  if (c < 128) return c >= 48 && c <= 57
  return ANY_DIGIT.test(text[at]!)
}

/**
 * The joined forms of hyphenated codes in a text: "VR-240" → "VR240", "USB-C" → "USBC". The
 * matches of HYPHENATED_CODE, found by looking around each hyphen (several times faster on long
 * text; the unit tests hold the two equal).
 */
export function joinedCodes(text: string): string[] {
  const out: string[] = []
  if (SURROGATE.test(text)) {
    for (const m of text.matchAll(HYPHENATED_CODE)) out.push(m[1]! + m[2]!)
    return out
  }
  const code = (at: number): number => (at >= 0 && at < text.length ? text.charCodeAt(at) : -1)
  const letter = (at: number): boolean => isLetter(code(at), text, at)
  const alnum = (at: number): boolean => {
    const c = code(at)
    return c >= 0 && (isLetter(c, text, at) || isDigit(c, text, at))
  }
  let lastEnd = 0
  for (const m of text.matchAll(HYPHEN)) {
    const i = m.index
    if (i < lastEnd) continue
    let a = i
    while (a > 0 && letter(a - 1)) a--
    if (a === i) continue
    // Before the letters: the start of the text, or a character that is neither letter nor
    // digit and not already part of the previous match.
    if (a > 0 ? alnum(a - 1) || a - 1 < lastEnd : lastEnd > 0) continue
    const j = i + 1
    let end: number
    if (j < text.length && isDigit(code(j), text, j)) {
      end = j + 1
      while (alnum(end)) end++
    }
    else if (letter(j) && !alnum(j + 1)) {
      end = j + 1
    }
    else continue
    out.push(text.slice(a, i) + text.slice(j, end))
    lastEnd = end
  }
  return out
}

/** A number with a unit (24V, 50Hz, 100µF, 2.5A): a value, not a model. */
const VALUE_WITH_UNIT = /^\p{N}+(?:[.,]\p{N}+)?\p{L}{1,3}$/u
const HAS_LETTER = /\p{L}/u
const HAS_DIGIT = /\p{N}/u

/**
 * The model and part codes a text names, lowercased: words mixing letters and digits (CC350,
 * 1N4007, BR1) and hyphenated codes joined (VR-240 → vr240, PX-10L → px10l), but not values with
 * a unit (24V, 50Hz). Queries and procedures go through the same function, so a code typed
 * "VR-240" or "vr240" meets the one in a title or an "applies to" line.
 *
 * @example modelCodes('Vantrel VR-240 rotary, 24V, board rev B') // ['vr240']
 */
export function modelCodes(text: string): string[] {
  const codes = new Set<string>()
  for (const token of tokenizeWords(text)) {
    // VR240's is VR240.
    const word = token.replace(/['’ʼ].*$/u, '')
    if (HAS_LETTER.test(word) && HAS_DIGIT.test(word) && !VALUE_WITH_UNIT.test(word)) codes.add(normaliseWord(word))
  }
  for (const code of joinedCodes(text)) if (HAS_DIGIT.test(code)) codes.add(normaliseWord(code))
  return [...codes]
}

/**
 * Where the hyphenated codes of a text are, joined and lowercased (for highlighting a code typed
 * without its hyphen).
 *
 * @example hyphenatedCodeSpans('Vantrel VR-240 rotary') // [{ code: 'vr240', start: 8, end: 14 }]
 */
export function hyphenatedCodeSpans(text: string): Array<{ code: string, start: number, end: number }> {
  const out: Array<{ code: string, start: number, end: number }> = []
  for (const m of text.matchAll(HYPHENATED_CODE)) {
    const end = m.index + m[0].length
    out.push({ code: normaliseWord(m[1]! + m[2]!), start: end - m[1]!.length - 1 - m[2]!.length, end })
  }
  return out
}

/** Word tokens with their positions in the original text (for highlighting). */
export function wordSpans(text: string): Array<{ word: string, start: number, end: number }> {
  const spans: Array<{ word: string, start: number, end: number }> = []
  for (const m of text.matchAll(WORD_PATTERN)) spans.push({ word: m[0], start: m.index, end: m.index + m[0].length })
  return spans
}

/** Lowercase, accents removed (NFKD also folds full-width and ligature forms), one apostrophe. */
export function normaliseWord(token: string): string {
  let w = token.toLowerCase()
  if (NON_ASCII.test(w)) w = w.normalize('NFKD').replace(COMBINING_MARKS, '').replace(APOSTROPHES, '\'')
  return w
}

function isConsonant(c: string): boolean {
  return c >= 'a' && c <= 'z' && !'aeiou'.includes(c)
}

/** dimm → dim, sett → set; but buzz, install, pass keep their doubled letter. */
function undouble(s: string): string {
  const n = s.length
  if (n >= 3 && s[n - 1] === s[n - 2] && isConsonant(s[n - 1]!) && !'lsz'.includes(s[n - 1]!)) return s.slice(0, -1)
  return s
}

/**
 * A light suffix stripper: plurals, -ing, -ed and a final silent e, enough that
 * dim/dims/dimmed/dimming, charge/charging/charged and fuse/fuses meet. It does not try to be
 * Porter: "dimmer" stays "dimmer" (a device, not the act of dimming), "flicker" keeps its -er.
 * Words with digits are part numbers and values (1n4007, 10v) and are left alone.
 */
export function stemWord(word: string): string {
  if (word.length <= 3 || DIGIT.test(word)) return word
  let s = word
  if (s.endsWith('ies') && s.length > 4) s = s.slice(0, -3) + 'y'
  else if (s.endsWith('sses')) s = s.slice(0, -2)
  else if (/(?:zz|x|ch|sh)es$/.test(s)) s = s.slice(0, -2)
  else if (s.endsWith('s') && !/(?:ss|us|is)$/.test(s)) s = s.slice(0, -1)

  if (s.endsWith('ing')) {
    const base = s.slice(0, -3)
    if (base.length >= 3 && VOWEL.test(base)) s = undouble(base)
  }
  else if (s.endsWith('ed') && !s.endsWith('eed')) {
    const base = s.slice(0, -2)
    if (base.length >= 3 && VOWEL.test(base)) s = undouble(base)
  }
  if (s.length > 3 && s.endsWith('e') && !s.endsWith('ee')) s = s.slice(0, -1)
  return s
}

/** Classifies a normalised word: a negation, a stop word, or a content word with its stem. */
function termOfWord(w: string): string | null {
  if (w.includes('\'')) {
    if (w.endsWith('n\'t')) return NEGATION_TERM
    w = CLITIC.test(w) ? w.replace(CLITIC, '') : w.replace(/'/g, '')
  }
  if (NEGATIONS.has(w)) return NEGATION_TERM
  if (STOP_WORDS.has(w)) return null
  if (w.length > QUERY_LIMITS.maxTermLength) return null
  // Lone letters are initials and list markers; lone digits are values (0-10 V, step 3).
  if (w.length === 1 && !DIGIT.test(w)) return null
  return stemWord(w)
}

/** The index/search term of one raw token, or null when it is not worth indexing. */
export function toIndexTerm(token: string): string | null {
  return termOfWord(normaliseWord(token))
}

/**
 * Stems a half-typed last word may be heading towards, beyond its own prefix: "flickeri" and
 * "flickerin" are on the way to "flickering" (indexed as "flicker"), "dimm"/"dimme" to
 * "dimming"/"dimmed" (indexed as "dim"). Searched as prefixes, alongside the word itself.
 */
export function completionStems(word: string): string[] {
  const out = new Set<string>()
  if (word.length < 3 || DIGIT.test(word)) return []
  for (const cut of ['in', 'i', 'e', '']) {
    if (!word.endsWith(cut)) continue
    const base = cut ? word.slice(0, -cut.length) : word
    if (base.length < 3) continue
    const undoubled = undouble(base)
    if (undoubled !== word) out.add(undoubled)
  }
  return [...out]
}

export type ParsedQuery = {
  /** Search terms in query order (stemmed; negations as "not"), at most QUERY_LIMITS.maxTerms. */
  terms: string[]
  /** The normalised word each term came from (same order), for typo correction and prefixes. */
  words: string[]
  /** True when the last term is still being typed (the query does not end in a separator). */
  lastTermIsPrefix: boolean
  /** True when the query was cut to the limits. */
  truncated: boolean
  /** Model and part codes the query names (`modelCodes`). */
  codes: string[]
}

// Cc: control characters act as separators; Cf (zero-width space, soft hyphen, bidi marks) are
// invisible and are removed outright so "fli\u200bcker" still reads as one word.
const CONTROL = /\p{Cc}/gu
const FORMAT = /\p{Cf}/gu

/**
 * Parses a search box value. Never throws: a non-string, an empty string or a string of pure
 * punctuation gives no terms; a very long string is cut to QUERY_LIMITS (cheaply: only the
 * first `scanChars` characters are looked at).
 */
export function parseQuery(q: unknown): ParsedQuery {
  if (typeof q !== 'string' || q.length === 0) return { terms: [], words: [], lastTermIsPrefix: false, truncated: false, codes: [] }
  let truncated = q.length > QUERY_LIMITS.scanChars
  let s = q.slice(0, QUERY_LIMITS.scanChars)
  s = s.replace(FORMAT, '').replace(CONTROL, ' ').toLowerCase().normalize('NFKD').replace(COMBINING_MARKS, '').replace(APOSTROPHES, '\'')
  if (s.length > QUERY_LIMITS.maxChars) {
    truncated = true
    // Cut at a separator: a word sliced in half by the limit is not a word the user typed.
    const cut = s.slice(0, QUERY_LIMITS.maxChars + 1)
    const lastBreak = cut.search(/[^\p{L}\p{N}']+[\p{L}\p{N}']*$/u)
    s = lastBreak > 0 ? cut.slice(0, lastBreak) : cut.slice(0, QUERY_LIMITS.maxChars)
  }

  const terms: string[] = []
  const words: string[] = []
  let lastTokenKept = false
  for (const token of tokenizeWords(s)) {
    const term = termOfWord(token)
    lastTokenKept = term !== null
    if (term === null) continue
    if (terms.length === QUERY_LIMITS.maxTerms) {
      truncated = true
      lastTokenKept = false
      break
    }
    terms.push(term)
    words.push(token.replace(CLITIC, '').replace(/'/g, ''))
  }
  const endsInWord = /[\p{L}\p{N}]$/u.test(s)
  const last = terms[terms.length - 1]
  const lastTermIsPrefix = !truncated && endsInWord && lastTokenKept && last !== undefined && last !== NEGATION_TERM && words[words.length - 1]!.length >= 2
  return { terms, words, lastTermIsPrefix, truncated, codes: terms.length ? modelCodes(s) : [] }
}
