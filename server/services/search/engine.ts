/**
 * Symptom-first search over published procedures, held in memory.
 *
 * A junior types what the unit does ("wont dim", "flikers half", "buzz when dimmed low") and
 * must land on the right procedure in the first few results while still typing. The index
 * knows nothing of the database: the caller feeds it `SearchDocument`s (one per published,
 * non-retired procedure) and the symptom vocabulary, and keeps it current with `upsert` and
 * `discard`.
 *
 * How a query is answered (see `search`):
 *  1. `parseQuery` reduces it to stemmed terms (negations folded to "not", stop words dropped).
 *  2. Each term becomes a slot of alternatives: the term itself; for the last, still-typed
 *     term, a prefix search (plus the stems a half-typed suffix is heading to); for a term the
 *     index has never seen and that is longer than 4 characters, spelling corrections taken
 *     from a dictionary of indexed words (edit distance 1, or 2 above 8 characters).
 *  3. Runs of terms that spell a vocabulary symptom name or synonym are recognised; the run
 *     may then also match the symptom's key, so "buzz" finds procedures filed under "Hums".
 *  4. All slots must match (evaluated rarest first, see `evaluate`). When that leaves fewer
 *     than THIN_RESULT hits, corrections are tried for every long term (a typo can be a real
 *     word), then one term may be missing, then half of them.
 *
 * What keeps it fast on 10k procedures (measured by scripts/bench/search-core.ts): prefix
 * search only on the last term, with its completions capped; fuzzy matching only for long
 * words, against a dictionary of indexed words rather than the whole term tree; the
 * rarest-first evaluation, which scores common words only for the few candidates left; and
 * leaving the body-text postings of words found in nearly every procedure unvisited
 * (`fieldsFor`). MiniSearch holds the index (tokenising, postings, replace, discard, vacuum)
 * and defines the scores; `TermIndex` computes them the same way, only for fewer documents,
 * and fills the index in bulk itself, into packed postings lists (`./postings`), for a build
 * of 10k procedures in about half the time and memory of MiniSearch's own `addAll`.
 */
import MiniSearch, { type MatchInfo, type Query } from 'minisearch'
import SearchableMap from 'minisearch/SearchableMap'
import { Postings } from './postings'
import { NEGATION_TERM, completionStems, joinedCodes, normaliseWord, parseQuery, toIndexTerm, tokenizeWords, wordSpans, type ParsedQuery } from './query'

// ---------------------------------------------------------------------------------------------
// Public types

/** One published procedure as the index sees it (the index keeps its own copy). */
export type SearchDocument = {
  /** Procedure id. */
  id: number
  slug: string
  title: string
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  hazards: string[]
  causes: Array<{ key: string, name: string }>
  stepTitles: string[]
  /** Summary, cause details, instructions, fix and verification as plain text. */
  text: string
  /** ISO 8601; orders filter-only listings (newest first). */
  publishedAt?: string
}

export type SymptomVocabularyEntry = { slug: string, name: string, synonyms: string[] }
export type DeviceTypeVocabularyEntry = { slug: string, name: string }
export type SearchVocabulary = { symptoms: SymptomVocabularyEntry[], deviceTypes: DeviceTypeVocabularyEntry[] }

export type SearchRequest = {
  q?: string
  deviceType?: string
  symptom?: string
  hazard?: string
  limit?: number
  offset?: number
}

/**
 * How often this procedure's causes were confirmed in repair records for the given symptoms.
 * `undefined` means no records. Supplied by the caller (the repair-record store).
 */
export type EvidenceLookup = (docId: number, symptomSlugs: string[]) => { confirmed: number, total: number } | undefined

/** A piece of plain text; `match` marks the words that matched. Render as text, never as HTML. */
export type SnippetPart = { text: string, match: boolean }

export type Highlight = {
  field: 'symptom' | 'title' | 'cause' | 'step' | 'text'
  /** Consecutive parts of the field's own text, in order. */
  snippet: SnippetPart[]
  /** The snippet starts after / ends before the field's text does (show an ellipsis). */
  clippedStart: boolean
  clippedEnd: boolean
}

export type SearchHit = {
  id: number
  slug: string
  title: string
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  /** Carried so a list can flag mains / stored-energy work before the procedure is opened. */
  hazards: string[]
  /** Final score: text relevance × evidence factor (0 for filter-only listings). */
  score: number
  highlights: Highlight[]
}

export type FacetValue = { value: string, label: string, count: number }

export type SearchResponse = {
  hits: SearchHit[]
  total: number
  facets: { deviceType: FacetValue[], symptom: FacetValue[], hazard: FacetValue[] }
  /** Closest symptom names/synonyms to the query ("did you mean"), best first. */
  suggestions: Array<{ slug: string, name: string }>
  /** Symptoms the query names (by vocabulary name or synonym), used for evidence weighting. */
  detectedSymptoms: string[]
  /**
   * 'all': every query term matched; 'partial': too few did, so hits match at least half of
   * the terms; 'browse': filters only, no text; 'none': nothing asked.
   */
  mode: 'all' | 'partial' | 'browse' | 'none'
  tookMs: number
}

// ---------------------------------------------------------------------------------------------
// Tuning

const FIELDS = ['symptomKey', 'symptoms', 'synonyms', 'title', 'deviceType', 'causes', 'stepTitles', 'text'] as const
type IndexField = (typeof FIELDS)[number]
const WORD_FIELDS: IndexField[] = FIELDS.filter(f => f !== 'symptomKey')
/** Where a word of two or three letters still being typed is completed: not in body text. */
const SHORT_PREFIX_FIELDS: IndexField[] = WORD_FIELDS.filter(f => f !== 'text')
const SHORT_PREFIX_LENGTH = 4

/** Symptom names and synonyms weigh most, then title, device type, causes, step titles, text. */
export const FIELD_BOOSTS: Readonly<Record<IndexField, number>> = {
  symptomKey: 4,
  symptoms: 5,
  synonyms: 4,
  title: 3,
  deviceType: 2,
  causes: 1.5,
  stepTitles: 1.25,
  text: 1,
}

/** MiniSearch's defaults, stated so the candidate scorer provably uses the same. */
const BM25 = { k: 1.2, b: 0.7, d: 0.5 } as const
const PREFIX_WEIGHT = 0.375

/** Fewer all-terms hits than this and the search widens (corrections, then fewer terms). */
const THIN_RESULT = 3
/** A negation alone says little ("not" is everywhere in procedure text); it refines. */
const NEGATION_WEIGHT = 0.5
/** Same shape as MiniSearch's own fuzzy weighting: 0.45 · len / (len + distance). */
const CORRECTION_WEIGHT = 0.45
const MAX_CORRECTIONS = 5
/** Libraries smaller than this keep every term in every field: their statistics are noise. */
const UBIQUITY_MIN_DOCUMENTS = 500
const UBIQUITOUS_SHARE = 0.8
const MAX_COMPLETIONS = 64
/** Completing a word of one or two letters would walk a large part of the term tree for little. */
const MIN_PREFIX_LENGTH = 3
/** Evidence may lift a procedure by at most 20 % over its text score. */
export const EVIDENCE_WEIGHT = 0.2
export const SEARCH_LIMITS = { defaultLimit: 20, maxLimit: 100, maxOffset: 10_000 } as const
const MAX_SUGGESTIONS = 5
const MAX_HIGHLIGHTS = 5
const TEXT_WINDOW_CHARS = 180
const TEXT_LEAD_CHARS = 50
const MAX_TEXT_MATCHES = 200
const TERM_CACHE_LIMIT = 200_000
const MAX_TEXT_TERM_FREQUENCY = 3

export const HAZARD_LABELS: Readonly<Record<string, string>> = {
  mains: 'Mains voltage',
  stored_energy: 'Stored energy',
  heat: 'Heat',
  none: 'No special hazard',
}

/** Edit distance allowed for a word: none up to 4 characters, 1 up to 8, then 2. */
function maxEdits(word: string): number {
  return word.length > 8 ? 2 : word.length > 4 ? 1 : 0
}

// ---------------------------------------------------------------------------------------------
// Internals

/**
 * MiniSearch plus the term-level access the query planner needs: term existence, posting
 * counts (the cost of a term), and scoring of a match tree over either every posting or a
 * given set of candidate documents. Scores follow MiniSearch's own formula exactly (BM25+
 * with the same parameters, field boosts, term weights, prefix weighting), so the planner can
 * mix and reorder work without changing any result; the candidate-scoring test holds it to
 * that against MiniSearch's `search`. Documents are keyed here by MiniSearch's internal short
 * ids; `externalId` maps back.
 */
class TermIndex<T> extends MiniSearch<T> {
  /**
   * How bulk indexing reads each field, set by the owner: raw tokens, the index term of a token
   * (null: none) and the cap on a term's count per document. Together exactly what `tokenize`
   * gives (this index's processTerm is the identity), but each distinct token goes through the
   * term function once per build instead of once per document.
   */
  bulkReaders: Readonly<Record<string, BulkFieldReader>> | null = null

  /**
   * While a bulk session runs: per field id, token → the postings list its term goes to (null:
   * no term). Nothing deletes meanwhile (`discard` ends the session), so the lists stay the
   * index's own.
   */
  private bulk: Array<Map<string, Postings | null> | undefined> | null = null

  /**
   * Bulk indexing, well over twice as fast as MiniSearch's own loop (scripts/bench/search.ts
   * times both on the same documents): identical postings, field lengths and averages (its
   * `add`, step for step; the agreement test compares them), but each token is looked up once
   * per occurrence in a per-build cache, and new postings go into packed lists (`Postings`)
   * instead of one Map entry each.
   */
  override addAll(documents: readonly T[]): void {
    const own = !this.bulk
    if (own) this.beginBulk()
    try {
      for (const document of documents) this.add(document)
    }
    finally {
      if (own) this.endBulk()
    }
  }

  /** Starts a bulk session spanning several `addAll` calls (a chunked build); `endBulk` ends it. */
  beginBulk(): void {
    if (this.bulkReaders) this.bulk = []
  }

  endBulk(): void {
    this.bulk = null
  }

  override add(document: T): void {
    this.version++
    const bulk = this.bulk
    const readers = this.bulkReaders
    if (!bulk || !readers) return super.add(document)
    const { extractField, stringifyField, fields, idField } = this._options
    const id = extractField(document, idField)
    if (id == null) throw new Error(`MiniSearch: document does not have ID field "${idField}"`)
    if (this._idToShortId.has(id)) throw new Error(`MiniSearch: duplicate ID ${id}`)
    const shortId = this._nextId
    this._idToShortId.set(id, shortId)
    this._documentIds.set(shortId, id)
    this._documentCount += 1
    this._nextId += 1
    for (const field of fields) {
      const value = extractField(document, field)
      if (value == null) continue
      const fieldId = this._fieldIds[field]!
      const reader = readers[field]!
      const cache = bulk[fieldId] ?? (bulk[fieldId] = new Map())
      // Distinct terms: MiniSearch's field length.
      let distinct = 0
      for (const token of reader.tokens(stringifyField(value, field))) {
        let list = cache.get(token)
        if (list === undefined) cache.set(token, (list = this.bulkList(reader.term(token), fieldId)))
        if (list !== null && list.bump(shortId, reader.cap)) distinct++
      }
      let lengths = this._fieldLength.get(shortId)
      if (!lengths) this._fieldLength.set(shortId, (lengths = []))
      lengths[fieldId] = distinct
      const count = this._documentCount - 1
      this._avgFieldLength[fieldId] = ((this._avgFieldLength[fieldId] || 0) * count + distinct) / (count + 1)
    }
  }

  /** The packed postings list of a term in a field, made (or converted from a Map) on first use. */
  private bulkList(term: string | null, fieldId: number): Postings | null {
    if (term === null) return null
    const data = this._index.fetch(term, () => new Map()) as FieldTermData
    const list = data.get(fieldId)
    if (list instanceof Postings) return list
    const packed = new Postings()
    if (list) for (const [doc, tf] of [...list].sort((a, b) => a[0] - b[0])) packed.set(doc, tf)
    data.set(fieldId, packed)
    return packed
  }

  /** Every posting of an indexed document, field length and average, by procedure id: what two ways of indexing must agree on. */
  snapshot(): IndexSnapshot {
    const fieldNames = Object.keys(this._fieldIds)
    const postings: IndexSnapshot['postings'] = {}
    let lingering = 0
    for (const [term, data] of this._index as Iterable<[string, FieldTermData]>) {
      for (const [fieldId, docs] of data) {
        const entries: Array<[number, number]> = []
        for (const [doc, tf] of docs) {
          if (this._documentIds.has(doc)) entries.push([this.externalId(doc), tf])
          else lingering++
        }
        if (entries.length) postings[`${term} ${fieldNames[fieldId]}`] = entries.sort((a, b) => a[0] - b[0])
      }
    }
    const fieldLengths: IndexSnapshot['fieldLengths'] = {}
    for (const [doc, lengths] of this._fieldLength) fieldLengths[this.externalId(doc)] = [...lengths]
    return { postings, lingering, fieldLengths, averages: [...this._avgFieldLength] }
  }

  hasTerm(term: string): boolean {
    return this._index.has(term)
  }

  hasTermWithPrefix(prefix: string): boolean {
    return !this._index.atPrefix(prefix).keys().next().done
  }

  externalId(shortId: number): number {
    return this._documentIds.get(shortId) as number
  }

  shortId(id: number): number | undefined {
    return this._idToShortId.get(id)
  }

  /**
   * The fields worth searching a term in. A term found in the text of at least
   * UBIQUITOUS_SHARE of a large library ("check", "not", "output", "board") says nothing
   * there: its BM25 weight in that field is near zero (idf ≤ ln 1.25 ≈ 0.22), while visiting
   * its text postings is most of a query's cost. Such a term is searched in the short fields
   * only; when it has none there it is no search term at all (null), like a stop word.
   */
  fieldsFor(term: string, fields: readonly string[]): readonly string[] | null {
    if (this._documentCount < UBIQUITY_MIN_DOCUMENTS || !fields.includes('text')) return fields
    const data = this._index.get(term)
    if (!data) return fields
    const textDf = data.get(this._fieldIds.text!)?.size ?? 0
    if (textDf < UBIQUITOUS_SHARE * this._documentCount) return fields
    const short = fields.filter(f => f !== 'text')
    return short.some(f => (data.get(this._fieldIds[f]!)?.size ?? 0) > 0) ? short : null
  }

  private postings(data: FieldTermData, fields: readonly string[]): number {
    let n = 0
    for (const f of fields) n += data.get(this._fieldIds[f]!)?.size ?? 0
    return n
  }

  /** Postings a match tree visits when scored in full: its cost. */
  nodeCost(node: MatchNode): number {
    if (node.kind !== 'term') return node.children.reduce((sum, child) => sum + this.nodeCost(child), 0)
    return this.derivedTerms(node).reduce((sum, d) => sum + d.postings, 0)
  }

  /**
   * Index entries a term node reaches (itself, or the terms under the prefix) with their
   * weight and fields. A prefix keeps its MAX_COMPLETIONS most frequent completions: "co"
   * must not score hundreds of words while the user is still typing.
   */
  private derivedTerms(node: TermNode): DerivedTerm[] {
    if (node.derived) return node.derived
    if (node.prefix) {
      // Typing asks for the same prefixes again and again; the answer holds until the index changes.
      if (this.completionsVersion !== this.version) {
        this.completions.clear()
        this.completionsVersion = this.version
      }
      const key = `${node.term}|${node.fields.join()}`
      const cached = this.completions.get(key)
      if (cached) return (node.derived = cached)
      if (this.completions.size > 5000) this.completions.clear()
      this.completions.set(key, this.computeDerivedTerms(node))
      return (node.derived = this.completions.get(key)!)
    }
    return (node.derived = this.computeDerivedTerms(node))
  }

  private completionsVersion = -1
  private readonly completions = new Map<string, DerivedTerm[]>()

  private computeDerivedTerms(node: TermNode): DerivedTerm[] {
    let out: DerivedTerm[] = []
    const offer = (term: string, data: FieldTermData, weight: number): void => {
      const fields = node.prefix ? this.fieldsFor(term, node.fields) : node.fields
      if (fields) out.push({ term, data, weight, fields, postings: this.postings(data, fields) })
    }
    if (!node.prefix) {
      const data = this._index.get(node.term)
      if (data) offer(node.term, data, 1)
    }
    else {
      // A word being typed is heading for a word: part numbers and codes are typed with digits.
      const wordOnly = !/\d/.test(node.term)
      for (const [t, data] of this._index.atPrefix(node.term)) {
        if (wordOnly && /\d/.test(t)) continue
        const extra = t.length - node.term.length
        offer(t, data, extra === 0 ? 1 : (PREFIX_WEIGHT * t.length) / (t.length + 0.3 * extra))
      }
      if (out.length > MAX_COMPLETIONS) out = out.sort((a, b) => b.postings - a.postings || (a.term < b.term ? -1 : 1)).slice(0, MAX_COMPLETIONS)
    }
    return out
  }

  /**
   * Scores a match tree: over every posting when `candidates` is null, else for those
   * documents only (visiting, per term and field, whichever is smaller: the postings or the
   * candidates). AND needs every child (the cheapest is scored first, the others only for what
   * it found), OR any; scores add up, as in MiniSearch. The caller releases the result.
   */
  scoreNode(node: MatchNode, candidates: DocScores | null): DocScores {
    if (node.kind === 'term') return this.scoreTerm(node, candidates)
    if (node.kind === 'or') {
      const out = this.acquire()
      for (const child of node.children) {
        const part = this.scoreNode(child, candidates)
        for (const doc of part.docs) out.add(doc, part.score[doc]!, part.sources[doc]!)
        this.release(part)
      }
      return out
    }
    const children = [...node.children].sort((a, b) => this.nodeCost(a) - this.nodeCost(b))
    let current: DocScores | null = null
    for (const child of children) {
      const part = this.scoreNode(child, current ?? candidates)
      if (!current) {
        current = part
        continue
      }
      const next = this.acquire()
      for (const doc of current.docs) if (part.has(doc)) next.add(doc, current.score[doc]! + part.score[doc]!, current.sources[doc]! + part.sources[doc]!)
      this.release(part)
      this.release(current)
      current = next
      if (current.docs.length === 0) break
    }
    return current ?? this.acquire()
  }

  private scoreTerm(node: TermNode, candidates: DocScores | null): DocScores {
    const out = this.acquire()
    const total = this._documentCount
    for (const { data, weight, fields } of this.derivedTerms(node)) {
      for (const field of fields) {
        const fieldId = this._fieldIds[field]!
        const freqs = data.get(fieldId)
        if (!freqs) continue
        const lengths = this.fieldLengths(fieldId)
        // BM25+ exactly as MiniSearch computes it, its constant parts taken out of the loop.
        const matching = freqs.size
        const factor = weight * node.weight * ((FIELD_BOOSTS as Record<string, number>)[field] ?? 1) * Math.log(1 + (total - matching + 0.5) / (matching + 0.5))
        const avgLength = this._avgFieldLength[fieldId]!
        const bm25 = (tf: number, doc: number): number => factor * (BM25.d + (tf * (BM25.k + 1)) / (tf + BM25.k * (1 - BM25.b + (BM25.b * lengths[doc]!) / avgLength)))
        if (candidates && candidates.docs.length < freqs.size) {
          for (const doc of candidates.docs) {
            const tf = freqs.get(doc)
            if (tf) out.add(doc, bm25(tf, doc), 1, true)
          }
        }
        else if (freqs instanceof Postings) {
          // The same loop over the packed pairs (tf 0: deleted).
          const pairs = freqs.data
          const end = 2 * freqs.length
          for (let i = 0; i < end; i += 2) {
            const tf = pairs[i + 1]!
            if (tf === 0) continue
            const doc = pairs[i]!
            if (candidates ? !candidates.has(doc) : !this._documentIds.has(doc)) continue
            out.add(doc, bm25(tf, doc), 1, true)
          }
        }
        else {
          for (const [doc, tf] of freqs) {
            // Postings of discarded documents linger until MiniSearch vacuums them.
            if (candidates ? !candidates.has(doc) : !this._documentIds.has(doc)) continue
            out.add(doc, bm25(tf, doc), 1, true)
          }
        }
      }
    }
    return out
  }

  // Field lengths by short id in flat arrays (MiniSearch keeps a Map of arrays), rebuilt after
  // the documents change; and a pool of score arrays, so a search allocates almost nothing.
  private lengthsVersion = -1
  private version = 0
  private lengths: Float64Array[] = []
  private readonly pool: DocScores[] = []

  override discard(id: unknown): void {
    // Vacuuming may drop lists the bulk cache points to.
    this.endBulk()
    super.discard(id)
    this.version++
  }

  private fieldLengths(fieldId: number): Float64Array {
    if (this.lengthsVersion !== this.version) {
      const size = this._nextId
      this.lengths = Object.values(this._fieldIds).map(() => new Float64Array(size))
      for (const [doc, lengths] of this._fieldLength) lengths.forEach((n, f) => (this.lengths[f]![doc] = n))
      this.lengthsVersion = this.version
    }
    return this.lengths[fieldId]!
  }

  acquire(): DocScores {
    const scores = this.pool.pop() ?? new DocScores()
    scores.reset(this._nextId)
    return scores
  }

  release(scores: DocScores): void {
    if (this.pool.length < 16) this.pool.push(scores)
  }

  /** Which index terms of the plan a document contains, and where: for highlighting. */
  matchInfo(nodes: readonly MatchNode[], id: number): MatchInfo {
    const info: MatchInfo = {}
    const doc = this._idToShortId.get(id)
    if (doc === undefined) return info
    const visit = (node: MatchNode): void => {
      if (node.kind !== 'term') {
        node.children.forEach(visit)
        return
      }
      for (const { term, data, fields } of this.derivedTerms(node)) {
        for (const field of fields) {
          if (!data.get(this._fieldIds[field]!)?.has(doc)) continue
          const fields = info[term] ?? (info[term] = [])
          if (!fields.includes(field)) fields.push(field)
        }
      }
    }
    nodes.forEach(visit)
    return info
  }
}

/** A term's postings per field id: packed lists from bulk indexing, MiniSearch's Maps from single adds. */
type FieldTermData = Map<number, Map<number, number>>
export type IndexSnapshot = {
  /** "term field" → [procedure id, term frequency] pairs, by id. */
  postings: Record<string, Array<[number, number]>>
  /** Postings of discarded documents, left until MiniSearch vacuums them. */
  lingering: number
  fieldLengths: Record<number, number[]>
  averages: number[]
}
/** How bulk indexing reads a field (see `TermIndex.bulkReaders`). */
type BulkFieldReader = { tokens: (text: string) => string[], term: (token: string) => string | null, cap: number }

/** An indexed procedure: our own copy of it, its MiniSearch short id, its facet values as codes. */
type DocRecord = { doc: SearchDocument, short: number, device: number, symptoms: number[], hazards: number[] }

type IndexState = {
  mini: TermIndex<SearchDocument>
  /** By procedure id. Copies (symptoms and hazards de-duplicated): callers may reuse their objects. */
  docs: Map<number, DocRecord>
  /** The same records by MiniSearch short id, which is what scoring yields. */
  records: Array<DocRecord | undefined>
  bySymptom: Map<string, Set<number>>
  /** Names seen on documents, for facet labels of values the vocabulary does not know. */
  symptomNames: Map<string, string>
  deviceTypeNames: Map<string, string>
  /** Filter-only listings' order (newest first), kept until the documents change. */
  newestFirst: DocRecord[] | null
}

type Alternative = { term: string, prefix: boolean, weight: number, fields?: readonly string[] }
/**
 * One query term position and what it may match. `candidates`: the terms it may stand for
 * when spelling a symptom name; `insignificant`: too common to search for.
 */
type Slot = { term: string, word: string, prefix: boolean, alternatives: Alternative[], candidates: Set<string>, insignificant: boolean }
type SymptomSpan = { start: number, end: number, slugs: string[] }
type Phrase = { terms: string[], slug: string }
type Candidate = { rec: DocRecord, score: number }
/** A query tree over single index terms: what a group of the plan must match. */
type TermNode = { kind: 'term', term: string, prefix: boolean, weight: number, fields: readonly string[], derived?: DerivedTerm[] }
type MatchNode = TermNode | { kind: 'and' | 'or', children: MatchNode[] }
type DerivedTerm = { term: string, data: FieldTermData, weight: number, fields: readonly string[], postings: number }
/**
 * Sums per document, dense over MiniSearch's short ids; `docs` lists the documents present.
 * A stamp marks presence, so reuse needs no clearing.
 */
class DocScores {
  score = new Float64Array(0)
  sources = new Uint16Array(0)
  groups = new Uint8Array(0)
  docs: number[] = []
  private mark = new Uint32Array(0)
  private stamp = 0

  reset(size: number): void {
    if (this.mark.length < size) {
      const capacity = Math.max(size, Math.ceil(this.mark.length * 1.5))
      this.score = new Float64Array(capacity)
      this.sources = new Uint16Array(capacity)
      this.groups = new Uint8Array(capacity)
      this.mark = new Uint32Array(capacity)
      this.stamp = 0
    }
    if (++this.stamp === 0xffffffff) {
      this.mark.fill(0)
      this.stamp = 1
    }
    this.docs.length = 0
  }

  has(doc: number): boolean {
    return this.mark[doc] === this.stamp
  }

  /** Adds to a document's sums; `once`: its sources count only on first sight (one term). */
  add(doc: number, score: number, sources: number, once = false): void {
    if (this.mark[doc] !== this.stamp) {
      this.mark[doc] = this.stamp
      this.score[doc] = score
      this.sources[doc] = sources
      this.groups[doc] = 0
      this.docs.push(doc)
    }
    else {
      this.score[doc] = this.score[doc]! + score
      if (!once) this.sources[doc] = this.sources[doc]! + sources
    }
  }

  /** Drops documents (from `docs`; `has` stays true, so callers test `groups` or rebuild). */
  keep(predicate: (doc: number) => boolean): void {
    let w = 0
    for (const doc of this.docs) if (predicate(doc)) this.docs[w++] = doc
    this.docs.length = w
  }
}
type Group = { node: MatchNode, cost: number }
/** `sources`: query terms matched (MiniSearch's "quality" factor). */
type Accumulated = { raw: number, sources: number, groups: number }
type PendingOp = { kind: 'upsert', doc: SearchDocument } | { kind: 'discard', id: number } | { kind: 'vocabulary', slugs: string[] }
type SuggestionEntry = { id: number, slug: string, phrase: string }
type FacetKind = 'device' | 'symptom' | 'hazard'

function clampInt(value: unknown, min: number, max: number, fallback: number): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) return fallback
  return Math.min(max, Math.max(min, Math.floor(value)))
}

function cleanFilter(value: unknown): string | undefined {
  return typeof value === 'string' && value.trim() !== '' ? value.trim() : undefined
}

function symptomSignature(s: SymptomVocabularyEntry): string {
  return [s.name, ...s.synonyms].join('\u0001')
}

function byCountThenLabel(a: FacetValue, b: FacetValue): number {
  return b.count - a.count || a.label.localeCompare(b.label)
}

function newestFirst(a: DocRecord, b: DocRecord): number {
  const pa = a.doc.publishedAt ?? ''
  const pb = b.doc.publishedAt ?? ''
  if (pa !== pb) return pa < pb ? 1 : -1
  return b.doc.id - a.doc.id
}

/** Best first; equal scores by procedure id, so pages are stable. */
function byScore(a: Candidate, b: Candidate): number {
  return b.score - a.score || a.rec.doc.id - b.rec.doc.id
}

/** A field's words, then the hyphenated codes it writes ("IRF-840" is also IRF840). */
function rawTokens(text: string): string[] {
  const tokens = tokenizeWords(text)
  if (text.includes('-') || text.includes('‑') || text.includes('–') || text.includes('‐')) for (const code of joinedCodes(text)) tokens.push(code)
  return tokens
}

function yieldToEventLoop(): Promise<void> {
  return new Promise(resolve => setTimeout(resolve, 0))
}

/** A private copy, symptoms and hazards de-duplicated (the text string itself is shared). */
function ownCopy(doc: SearchDocument): SearchDocument {
  const seen = new Set<string>()
  return {
    id: doc.id,
    slug: doc.slug,
    title: doc.title,
    deviceType: { slug: doc.deviceType.slug, name: doc.deviceType.name },
    symptoms: doc.symptoms.filter(s => !seen.has(s.slug) && seen.add(s.slug)).map(s => ({ slug: s.slug, name: s.name })),
    hazards: [...new Set(doc.hazards)],
    causes: doc.causes.map(c => ({ key: c.key, name: c.name })),
    stepTitles: [...doc.stepTitles],
    text: doc.text,
    ...(doc.publishedAt !== undefined ? { publishedAt: doc.publishedAt } : {}),
  }
}

function uniqueById(docs: readonly SearchDocument[]): SearchDocument[] {
  const byId = new Map<number, SearchDocument>()
  for (const d of docs) byId.set(d.id, ownCopy(d))
  return [...byId.values()]
}

// ---------------------------------------------------------------------------------------------

export class ProcedureSearchIndex {
  private state: IndexState
  private symptomVocabulary = new Map<string, SymptomVocabularyEntry>()
  private deviceTypeVocabulary = new Map<string, DeviceTypeVocabularyEntry>()
  private phrasesByFirstTerm = new Map<string, Phrase[]>()
  private allPhrases: Phrase[] = []
  private suggestionIndex: MiniSearch<SuggestionEntry>
  /** Indexed words (normalised, ≥ 4 letters, no digits) → their stem: the spelling-correction dictionary. */
  private readonly surfaceWords = new SearchableMap<string>()
  private readonly termCache = new Map<string, string | null>()
  private readonly facetCodes: Record<FacetKind, Map<string, number>> = { device: new Map(), symptom: new Map(), hazard: new Map() }
  private readonly facetValues: Record<FacetKind, string[]> = { device: [], symptom: [], hazard: [] }
  private buildGeneration = 0
  private pendingOps: PendingOp[] | null = null
  private readonly candidateScoring: boolean

  /**
   * `candidateScoring: false` scores every group through MiniSearch's search (slower; the
   * reference the fast path is tested against).
   */
  constructor(vocabulary?: SearchVocabulary, options: { candidateScoring?: boolean } = {}) {
    this.candidateScoring = options.candidateScoring ?? true
    this.state = this.newState()
    this.suggestionIndex = this.newSuggestionIndex([])
    if (vocabulary) this.setVocabulary(vocabulary)
  }

  get size(): number {
    return this.state.docs.size
  }

  /** For tests: the whole term index in plain data (see `TermIndex.snapshot`). */
  snapshot(): IndexSnapshot {
    return this.state.mini.snapshot()
  }

  has(id: number): boolean {
    return this.state.docs.has(id)
  }

  /**
   * Replaces the whole index at once, blocking for the duration (seconds for 10k procedures:
   * see scripts/bench/search-core.ts); a server should use `buildAsync`. Set the vocabulary
   * first, so synonyms are indexed with the documents.
   * Duplicate ids: the last document wins.
   */
  build(docs: readonly SearchDocument[]): void {
    this.buildGeneration++
    this.pendingOps = null
    const state = this.newState()
    const unique = uniqueById(docs)
    state.mini.addAll(unique)
    for (const d of unique) this.register(state, d)
    this.state = state
  }

  /**
   * Builds a new index in chunks, yielding to the event loop between them, and swaps it in
   * when complete; searches keep answering from the previous index meanwhile. Upserts,
   * discards and vocabulary changes made during the build are applied to both. A later
   * build (sync or async) supersedes one in flight, whose promise then resolves unused.
   */
  async buildAsync(docs: readonly SearchDocument[], options: { chunkSize?: number } = {}): Promise<void> {
    const chunkSize = clampInt(options.chunkSize, 1, 10_000, 100)
    const generation = ++this.buildGeneration
    const ops: PendingOp[] = []
    this.pendingOps = ops
    const state = this.newState()
    const unique = uniqueById(docs)
    // One bulk session for all chunks: nothing else touches the new index until it is swapped in.
    state.mini.beginBulk()
    for (let i = 0; i < unique.length; i += chunkSize) {
      await yieldToEventLoop()
      if (generation !== this.buildGeneration) return
      const chunk = unique.slice(i, i + chunkSize)
      state.mini.addAll(chunk)
      for (const d of chunk) this.register(state, d)
    }
    state.mini.endBulk()
    if (generation !== this.buildGeneration) return
    for (const op of ops) {
      if (op.kind === 'upsert') this.upsertInto(state, op.doc)
      else if (op.kind === 'discard') this.discardFrom(state, op.id)
      else this.reindexSymptoms(state, op.slugs)
    }
    this.pendingOps = null
    this.state = state
  }

  /** Adds a procedure or replaces its previous version (MiniSearch `replace`, never `remove`). */
  upsert(doc: SearchDocument): void {
    this.upsertInto(this.state, doc)
    this.pendingOps?.push({ kind: 'upsert', doc })
  }

  /** Drops a procedure (retired, unpublished). Returns whether it was indexed. */
  discard(id: number): boolean {
    const had = this.discardFrom(this.state, id)
    this.pendingOps?.push({ kind: 'discard', id })
    return had
  }

  /** Ids of indexed procedures filed under a symptom: the ones a change to it re-indexes. */
  documentsAffectedBySymptom(slug: string): number[] {
    return [...(this.state.bySymptom.get(slug) ?? [])].sort((a, b) => a - b)
  }

  /**
   * Sets the symptom and device-type vocabulary. Query-time expansion (synonym → symptom key)
   * takes effect at once for every document. The synonyms field of the documents filed under a
   * symptom whose name or synonyms changed is re-indexed (only those documents, via `replace`);
   * device-type names only label facets and need no re-index.
   */
  setVocabulary(vocabulary: SearchVocabulary): { changedSymptoms: string[], reindexed: number } {
    const next = new Map<string, SymptomVocabularyEntry>()
    for (const s of vocabulary.symptoms) next.set(s.slug, { slug: s.slug, name: s.name, synonyms: [...s.synonyms] })
    const changed: string[] = []
    for (const [slug, entry] of next) {
      const old = this.symptomVocabulary.get(slug)
      if (!old || symptomSignature(old) !== symptomSignature(entry)) changed.push(slug)
    }
    for (const slug of this.symptomVocabulary.keys()) if (!next.has(slug)) changed.push(slug)

    this.symptomVocabulary = next
    this.deviceTypeVocabulary = new Map(vocabulary.deviceTypes.map(d => [d.slug, { slug: d.slug, name: d.name }]))
    this.rebuildPhrases()
    const reindexed = this.reindexSymptoms(this.state, changed)
    this.pendingOps?.push({ kind: 'vocabulary', slugs: changed })
    return { changedSymptoms: changed, reindexed }
  }

  /**
   * Answers a search.
   *
   * - Text: see the module comment. An empty query (or one of stop words only) with at least
   *   one filter lists the filtered procedures newest first; with no filter it returns no hits
   *   and empty facets (the search page shows its prompt, not the whole library).
   * - Facets are counted over the text-matched set with the OTHER filters applied: the
   *   deviceType counts ignore the deviceType filter but honour symptom and hazard, and so on.
   * - Evidence: with a lookup and at least one queried symptom (named in the query or given as
   *   the symptom filter), each hit's text score T becomes
   *
   *       final = T · (1 + W · r),   r = (confirmed + 1) / (total + 2),   W = EVIDENCE_WEIGHT
   *
   *   r is the Laplace-smoothed confirmation rate (0.5 with no records, → 1 with many
   *   confirmations, → 0 with many refutations). The factor lies in [1, 1 + W], so evidence
   *   re-orders hits whose text scores are within 20 % and can never lift a weak text match
   *   over one more than 20 % stronger; a document that does not match the text is never a
   *   hit at all. Filter-only listings are not re-ordered by evidence.
   */
  search(request: SearchRequest, options: { evidence?: EvidenceLookup } = {}): SearchResponse {
    const started = performance.now()
    const limit = clampInt(request.limit, 1, SEARCH_LIMITS.maxLimit, SEARCH_LIMITS.defaultLimit)
    const offset = clampInt(request.offset, 0, SEARCH_LIMITS.maxOffset, 0)
    const filters = { deviceType: cleanFilter(request.deviceType), symptom: cleanFilter(request.symptom), hazard: cleanFilter(request.hazard) }
    const hasFilter = filters.deviceType !== undefined || filters.symptom !== undefined || filters.hazard !== undefined
    const parsed = parseQuery(request.q)
    const state = this.state

    let candidates: Candidate[]
    let mode: SearchResponse['mode']
    let detected: string[] = []
    let plan: MatchNode[] = []
    if (parsed.terms.length === 0) {
      if (!hasFilter) {
        return { hits: [], total: 0, facets: { deviceType: [], symptom: [], hazard: [] }, suggestions: [], detectedSymptoms: [], mode: 'none', tookMs: performance.now() - started }
      }
      mode = 'browse'
      state.newestFirst ??= [...state.docs.values()].sort(newestFirst)
      candidates = state.newestFirst.map(rec => ({ rec, score: 0 }))
    }
    else {
      const matched = this.matchText(state, parsed)
      candidates = matched.results
      plan = matched.plan
      mode = matched.mode
      detected = matched.detectedSymptoms
    }

    // Facets and filters in one pass over the matched set. -1: no filter; a value no document
    // has gets a code nothing matches.
    const filterCode = (kind: FacetKind, value: string | undefined): number => (value === undefined ? -1 : (this.facetCodes[kind].get(value) ?? -2))
    const fDevice = filterCode('device', filters.deviceType)
    const fSymptom = filterCode('symptom', filters.symptom)
    const fHazard = filterCode('hazard', filters.hazard)
    const deviceCounts = new Int32Array(this.facetValues.device.length)
    const symptomCounts = new Int32Array(this.facetValues.symptom.length)
    const hazardCounts = new Int32Array(this.facetValues.hazard.length)
    const passing: Candidate[] = []
    for (const c of candidates) {
      const r = c.rec
      const okDevice = fDevice === -1 || r.device === fDevice
      const okSymptom = fSymptom === -1 || r.symptoms.includes(fSymptom)
      const okHazard = fHazard === -1 || r.hazards.includes(fHazard)
      if (okSymptom && okHazard) deviceCounts[r.device]!++
      if (okDevice && okHazard) for (const x of r.symptoms) symptomCounts[x]!++
      if (okDevice && okSymptom) for (const x of r.hazards) hazardCounts[x]!++
      if (okDevice && okSymptom && okHazard) passing.push(c)
    }
    const facet = (kind: FacetKind, counts: Int32Array, label: (value: string) => string): FacetValue[] => {
      const out: FacetValue[] = []
      counts.forEach((count, code) => {
        if (count > 0) {
          const value = this.facetValues[kind][code]!
          out.push({ value, count, label: label(value) })
        }
      })
      return out.sort(byCountThenLabel)
    }
    const facets = {
      deviceType: facet('device', deviceCounts, v => this.deviceTypeVocabulary.get(v)?.name ?? state.deviceTypeNames.get(v) ?? v),
      symptom: facet('symptom', symptomCounts, v => this.symptomVocabulary.get(v)?.name ?? state.symptomNames.get(v) ?? v),
      hazard: facet('hazard', hazardCounts, v => HAZARD_LABELS[v] ?? v),
    }

    // Only what can reach the page is put in order (browse lists are in order already).
    const pageEnd = offset + limit
    const evidenceSymptoms = [...new Set([...detected, ...(filters.symptom ? [filters.symptom] : [])])]
    const weighEvidence = mode !== 'browse' && options.evidence !== undefined && evidenceSymptoms.length > 0
    let ranked: Candidate[]
    if (mode === 'browse') ranked = passing
    else {
      ranked = topCandidates(passing, pageEnd, weighEvidence ? 1 + EVIDENCE_WEIGHT : 1)
      if (weighEvidence) ranked = this.applyEvidence(ranked, evidenceSymptoms, options.evidence!)
    }

    const hits: SearchHit[] = []
    for (const c of ranked.slice(offset, pageEnd)) {
      const doc = c.rec.doc
      hits.push({
        id: doc.id,
        slug: doc.slug,
        title: doc.title,
        deviceType: { slug: doc.deviceType.slug, name: doc.deviceType.name },
        symptoms: doc.symptoms.map(s => ({ slug: s.slug, name: this.symptomVocabulary.get(s.slug)?.name ?? s.name })),
        hazards: [...doc.hazards],
        score: c.score,
        highlights: plan.length ? this.highlightsFor(doc, state.mini.matchInfo(plan, doc.id)) : [],
      })
    }
    return {
      hits,
      total: passing.length,
      facets,
      suggestions: parsed.terms.length ? this.suggest(parsed) : [],
      detectedSymptoms: detected,
      mode,
      tookMs: performance.now() - started,
    }
  }

  // -------------------------------------------------------------------------------------------
  // Indexing

  private newState(): IndexState {
    const mini = new TermIndex<SearchDocument>({
      fields: [...FIELDS],
      idField: 'id',
      extractField: (doc, field) => this.extractField(doc, field),
      // Terms are made here rather than in processTerm so repeats in long text can be capped.
      tokenize: (text, field) => (field === 'symptomKey' ? text.split(' ').filter(Boolean) : this.indexTerms(text, field === 'text')),
      processTerm: term => term,
      searchOptions: {
        // Queries arrive as single, already-processed terms (see `toQuery`).
        tokenize: term => [term],
        processTerm: term => term,
        boost: { ...FIELD_BOOSTS },
        bm25: { ...BM25 },
        weights: { fuzzy: 0.45, prefix: PREFIX_WEIGHT },
      },
    })
    const words: BulkFieldReader = { tokens: rawTokens, term: token => this.indexTerm(token), cap: Infinity }
    mini.bulkReaders = {
      ...Object.fromEntries(WORD_FIELDS.map(f => [f, words])),
      text: { ...words, cap: MAX_TEXT_TERM_FREQUENCY },
      symptomKey: { tokens: text => text.split(' ').filter(Boolean), term: slug => slug, cap: Infinity },
    }
    return { mini, docs: new Map(), records: [], bySymptom: new Map(), symptomNames: new Map(), deviceTypeNames: new Map(), newestFirst: null }
  }

  private extractField(doc: SearchDocument, field: string): string | number | undefined {
    switch (field) {
      case 'id':
        return doc.id
      case 'symptomKey':
        return doc.symptoms.map(s => s.slug).join(' ')
      case 'symptoms':
        return doc.symptoms
          .flatMap((s) => {
            const vocabName = this.symptomVocabulary.get(s.slug)?.name
            return vocabName && vocabName !== s.name ? [s.name, vocabName] : [s.name]
          })
          .join('\n')
      case 'synonyms':
        return doc.symptoms.flatMap(s => this.symptomVocabulary.get(s.slug)?.synonyms ?? []).join('\n')
      case 'title':
        return doc.title
      case 'deviceType':
        return doc.deviceType.name
      case 'causes':
        return doc.causes.map(c => c.name).join('\n')
      case 'stepTitles':
        return doc.stepTitles.join('\n')
      case 'text':
        return doc.text
      default:
        return undefined
    }
  }

  /**
   * Index terms of a field. In long text a term counts at most MAX_TEXT_TERM_FREQUENCY times:
   * BM25's term-frequency factor is nearly saturated by then (k = 1.2: tf 3 gives 78 % of the
   * limit), and every occurrence indexed is a posting update, the bulk of build time.
   */
  private indexTerms(text: string, capRepeats: boolean): string[] {
    const out: string[] = []
    const counts = capRepeats ? new Map<string, number>() : null
    for (const token of rawTokens(text)) {
      const term = this.indexTerm(token)
      if (term === null) continue
      if (counts) {
        const n = (counts.get(term) ?? 0) + 1
        counts.set(term, n)
        if (n > MAX_TEXT_TERM_FREQUENCY) continue
      }
      out.push(term)
    }
    return out
  }

  /** `toIndexTerm`, memoised; first sight of a word also files it in the correction dictionary. */
  private indexTerm(token: string): string | null {
    const cached = this.termCache.get(token)
    if (cached !== undefined) return cached
    const term = toIndexTerm(token)
    if (this.termCache.size < TERM_CACHE_LIMIT) this.termCache.set(token, term)
    // Words only: "correcting" IRF640 to IRF840 or R12 to R21 would name another part.
    if (term !== null && term !== NEGATION_TERM && !/[\d'’]/.test(token)) {
      const word = normaliseWord(token)
      if (word.length >= 4 && !this.surfaceWords.has(word)) this.surfaceWords.set(word, term)
    }
    return term
  }

  /** Facet values as small integers, so facet counting is array arithmetic. */
  private code(kind: FacetKind, value: string): number {
    let c = this.facetCodes[kind].get(value)
    if (c === undefined) {
      c = this.facetValues[kind].length
      this.facetCodes[kind].set(value, c)
      this.facetValues[kind].push(value)
    }
    return c
  }

  /** Call after the document went into MiniSearch (its short id is read from there). */
  private register(state: IndexState, doc: SearchDocument): void {
    const short = state.mini.shortId(doc.id)!
    const rec: DocRecord = {
      doc,
      short,
      device: this.code('device', doc.deviceType.slug),
      symptoms: doc.symptoms.map(s => this.code('symptom', s.slug)),
      hazards: doc.hazards.map(h => this.code('hazard', h)),
    }
    state.docs.set(doc.id, rec)
    state.records[short] = rec
    state.newestFirst = null
    state.deviceTypeNames.set(doc.deviceType.slug, doc.deviceType.name)
    for (const s of doc.symptoms) state.symptomNames.set(s.slug, s.name)
    for (const s of doc.symptoms) {
      let ids = state.bySymptom.get(s.slug)
      if (!ids) state.bySymptom.set(s.slug, (ids = new Set()))
      ids.add(doc.id)
    }
  }

  private unregister(state: IndexState, id: number): void {
    const old = state.docs.get(id)
    if (!old) return
    state.docs.delete(id)
    state.records[old.short] = undefined
    state.newestFirst = null
    for (const s of old.doc.symptoms) state.bySymptom.get(s.slug)?.delete(id)
  }

  private upsertInto(state: IndexState, given: SearchDocument): void {
    const doc = ownCopy(given)
    if (state.mini.has(doc.id)) {
      this.unregister(state, doc.id)
      state.mini.replace(doc)
    }
    else {
      state.mini.add(doc)
    }
    this.register(state, doc)
  }

  private discardFrom(state: IndexState, id: number): boolean {
    if (!state.mini.has(id)) return false
    state.mini.discard(id)
    this.unregister(state, id)
    return true
  }

  private reindexSymptoms(state: IndexState, slugs: readonly string[]): number {
    const affected = new Set<number>()
    for (const slug of slugs) for (const id of state.bySymptom.get(slug) ?? []) affected.add(id)
    for (const id of affected) {
      const { doc } = state.docs.get(id)!
      this.unregister(state, id)
      state.mini.replace(doc)
      this.register(state, doc)
    }
    return affected.size
  }

  private rebuildPhrases(): void {
    const byFirst = new Map<string, Phrase[]>()
    const all: Phrase[] = []
    const entries: SuggestionEntry[] = []
    for (const s of this.symptomVocabulary.values()) {
      for (const phrase of [s.name, ...s.synonyms]) {
        entries.push({ id: entries.length, slug: s.slug, phrase })
        const terms = tokenizeWords(phrase)
          .map(t => toIndexTerm(t))
          .filter((t): t is string => t !== null)
        if (terms.length === 0) continue
        const p = { terms, slug: s.slug }
        all.push(p)
        const list = byFirst.get(terms[0]!)
        if (list) list.push(p)
        else byFirst.set(terms[0]!, [p])
      }
    }
    this.phrasesByFirstTerm = byFirst
    this.allPhrases = all
    this.suggestionIndex = this.newSuggestionIndex(entries)
  }

  private newSuggestionIndex(entries: SuggestionEntry[]): MiniSearch<SuggestionEntry> {
    const index = new MiniSearch<SuggestionEntry>({
      fields: ['phrase'],
      storeFields: ['slug'],
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
    index.addAll(entries)
    return index
  }

  // -------------------------------------------------------------------------------------------
  // Query planning

  private correctionsFor(word: string, exclude: string): Alternative[] {
    const edits = maxEdits(word)
    if (edits === 0) return []
    const best = new Map<string, number>()
    const offer = (stem: string, distance: number): void => {
      if (stem === exclude || distance === 0) return
      const prev = best.get(stem)
      if (prev === undefined || distance < prev) best.set(stem, distance)
    }
    for (const [, [stem, distance]] of this.surfaceWords.fuzzyGet(word, edits)) offer(stem, distance)
    // Swapped neighbours ("charegr") are the commonest slip at a keyboard, but two edits to
    // Levenshtein; count them as one, as Damerau does.
    for (let i = 0; i + 1 < word.length; i++) {
      if (word[i] === word[i + 1]) continue
      const swapped = word.slice(0, i) + word[i + 1] + word[i] + word.slice(i + 2)
      const stem = this.surfaceWords.get(swapped)
      if (stem !== undefined) offer(stem, 1)
    }
    return [...best]
      .sort((a, b) => a[1] - b[1] || a[0].localeCompare(b[0]))
      .slice(0, MAX_CORRECTIONS)
      .map(([term, distance]) => ({ term, prefix: false, weight: (CORRECTION_WEIGHT * term.length) / (term.length + distance) }))
  }

  private resolveSlots(mini: TermIndex<SearchDocument>, parsed: ParsedQuery, correctKnownTerms: boolean): Slot[] {
    const slots: Slot[] = []
    parsed.terms.forEach((term, i) => {
      const word = parsed.words[i]!
      const isPrefix = parsed.lastTermIsPrefix && i === parsed.terms.length - 1 && term.length >= MIN_PREFIX_LENGTH
      const base = term === NEGATION_TERM ? NEGATION_WEIGHT : 1
      const alternatives: Alternative[] = []
      const known = mini.hasTerm(term)
      if (isPrefix) {
        const prefixHits = mini.hasTermWithPrefix(term)
        if (prefixHits) alternatives.push({ term, prefix: true, weight: base })
        // A half-typed suffix ("flickeri", "dimm"): also look for the stem it is heading to;
        // as a prefix only when the word itself leads nowhere, to avoid counting a match twice.
        for (const stem of completionStems(word)) {
          if (stem === term) continue
          if (!prefixHits && mini.hasTermWithPrefix(stem)) alternatives.push({ term: stem, prefix: true, weight: base })
          else if (prefixHits && mini.hasTerm(stem)) alternatives.push({ term: stem, prefix: false, weight: base })
        }
      }
      else if (known) {
        alternatives.push({ term, prefix: false, weight: base })
      }
      if ((!known || correctKnownTerms) && !(isPrefix && alternatives.length > 0)) {
        for (const alt of this.correctionsFor(word, term)) if (mini.hasTerm(alt.term)) alternatives.push({ ...alt, weight: alt.weight * base })
      }
      const candidates = new Set<string>([term])
      for (const a of alternatives) if (!a.prefix) candidates.add(a.term)
      const resolved: Alternative[] = []
      for (const a of dedupeAlternatives(alternatives)) {
        const fields = a.prefix ? (a.term.length < SHORT_PREFIX_LENGTH ? SHORT_PREFIX_FIELDS : WORD_FIELDS) : mini.fieldsFor(a.term, WORD_FIELDS)
        if (fields) resolved.push({ ...a, fields })
      }
      // Every way of matching the term was too common to mean anything: it is left out of
      // the plan (though it still spells symptom names), unless nothing else is left.
      const insignificant = alternatives.length > 0 && resolved.length === 0
      slots.push({ term, word, prefix: isPrefix, alternatives: insignificant ? [] : resolved, candidates, insignificant })
    })
    if (slots.length > 0 && slots.every(s => s.insignificant)) {
      for (const s of slots) {
        s.insignificant = false
        s.alternatives = [{ term: s.term, prefix: s.prefix, weight: s.term === NEGATION_TERM ? NEGATION_WEIGHT : 1, fields: WORD_FIELDS }]
      }
    }
    return slots
  }

  private slotMatchesPhraseTerm(slot: Slot, phraseTerm: string): boolean {
    if (slot.candidates.has(phraseTerm)) return true
    return slot.prefix && slot.term.length >= 3 && phraseTerm.startsWith(slot.term)
  }

  /** Runs of slots that spell a symptom name or synonym: longest first, left to right. */
  private detectSymptomSpans(slots: Slot[]): SymptomSpan[] {
    const spans: SymptomSpan[] = []
    for (let i = 0; i < slots.length; i++) {
      let bestLength = 0
      let bestSlugs = new Set<string>()
      const consider = (phrase: Phrase): void => {
        const n = phrase.terms.length
        if (n > slots.length - i || n < bestLength) return
        for (let j = 0; j < n; j++) if (!this.slotMatchesPhraseTerm(slots[i + j]!, phrase.terms[j]!)) return
        if (n > bestLength) {
          bestLength = n
          bestSlugs = new Set()
        }
        bestSlugs.add(phrase.slug)
      }
      const slot = slots[i]!
      if (slot.prefix) for (const p of this.allPhrases) consider(p)
      else for (const c of slot.candidates) for (const p of this.phrasesByFirstTerm.get(c) ?? []) consider(p)
      if (bestLength > 0) {
        spans.push({ start: i, end: i + bestLength, slugs: [...bestSlugs].sort() })
        i += bestLength - 1
      }
    }
    return spans
  }

  private slotNode(slot: Slot): MatchNode | null {
    if (slot.alternatives.length === 0) return null
    const nodes: MatchNode[] = slot.alternatives.map(a => ({ kind: 'term', term: a.term, prefix: a.prefix, weight: a.weight, fields: a.fields ?? WORD_FIELDS }))
    return nodes.length === 1 ? nodes[0]! : { kind: 'or', children: nodes }
  }

  private symptomKeyNode(slugs: string[]): MatchNode {
    const nodes: MatchNode[] = slugs.map(slug => ({ kind: 'term', term: slug, prefix: false, weight: 1, fields: ['symptomKey'] }))
    return nodes.length === 1 ? nodes[0]! : { kind: 'or', children: nodes }
  }

  /**
   * Top-level groups of a plan. For `all`, a recognised symptom run is one group (its words
   * together, or its symptom key); for `partial`, every word and every run's key count
   * separately towards the minimum match. Returns null when an all-terms match is impossible
   * (a term that matches nothing).
   */
  private planGroups(mini: TermIndex<SearchDocument>, slots: Slot[], spans: SymptomSpan[], shape: 'all' | 'partial'): Group[] | null {
    const groups: Group[] = []
    const add = (node: MatchNode): void => {
      groups.push({ node, cost: mini.nodeCost(node) })
    }
    const seen = new Set<string>()
    let i = 0
    let spanIndex = 0
    while (i < slots.length) {
      const span = spans[spanIndex]
      if (span && span.start === i) {
        const spanSlots = slots.slice(span.start, span.end)
        const key = this.symptomKeyNode(span.slugs)
        if (shape === 'partial') {
          for (const slot of spanSlots) {
            const dedupeKey = `${slot.term}|${slot.prefix}`
            if (slot.insignificant || seen.has(dedupeKey)) continue
            seen.add(dedupeKey)
            const node = this.slotNode(slot)
            if (node) add(node)
          }
          add(key)
        }
        else {
          // A word the run repeats ("low … at low setting") counts once, as in MiniSearch.
          const distinct = spanSlots.filter((slot, k) => !slot.insignificant && spanSlots.findIndex(o => o.term === slot.term && o.prefix === slot.prefix) === k)
          const inner = distinct.map(slot => this.slotNode(slot))
          const words: MatchNode | null = inner.length > 0 && inner.every(n => n !== null) ? { kind: 'and', children: inner as MatchNode[] } : null
          add(words ? { kind: 'or', children: [words, key] } : key)
        }
        i = span.end
        spanIndex++
        continue
      }
      const slot = slots[i]!
      i++
      if (slot.insignificant) continue
      // "flicker flicker flicker" is one term, not three times the weight.
      const dedupeKey = `${slot.term}|${slot.prefix}`
      if (seen.has(dedupeKey)) continue
      seen.add(dedupeKey)
      const node = this.slotNode(slot)
      if (node) add(node)
      else if (shape === 'all') return null
    }
    return groups
  }

  /**
   * Documents matching at least `minMatch` of the groups, scored as MiniSearch scores a
   * combination: the sum of the groups' BM25 scores × the number of query terms matched.
   *
   * Cheapest groups first: a document matching `minMatch` of n groups must match one of the
   * n − minMatch + 1 cheapest (pigeonhole), so only those "seed" groups are scored over all
   * their postings. The other groups are scored for the candidates found so far only, and
   * candidates that can no longer reach `minMatch` are dropped as we go. For an all-terms
   * match this is a rarest-first intersection: the common words of a query ("output",
   * "load", "not") confirm a few hundred candidates instead of scoring the whole library.
   */
  private evaluate(state: IndexState, groups: Group[], minMatch: number): Candidate[] {
    const mini = state.mini
    if (!this.candidateScoring) return this.evaluateWithMiniSearch(state, groups, minMatch)
    const order = [...groups].sort((a, b) => a.cost - b.cost)
    const seeds = order.length - minMatch + 1
    const acc = mini.acquire()
    for (let g = 0; g < order.length; g++) {
      const seeding = g < seeds
      const part = mini.scoreNode(order[g]!.node, seeding ? null : acc)
      for (const doc of part.docs) {
        if (!seeding && !acc.has(doc)) continue
        acc.add(doc, part.score[doc]!, part.sources[doc]!)
        acc.groups[doc] = acc.groups[doc]! + 1
      }
      mini.release(part)
      const remaining = order.length - g - 1
      if (g >= seeds - 1) {
        // A dropped document leaves `docs` but stays marked: it may still be scored through
        // a posting list, harmlessly, as only `docs` is read out.
        acc.keep(doc => acc.groups[doc]! + remaining >= minMatch)
      }
      if (acc.docs.length === 0) break
    }
    const out: Candidate[] = []
    for (const doc of acc.docs) {
      const rec = state.records[doc]
      if (rec && acc.groups[doc]! >= minMatch) out.push({ rec, score: acc.score[doc]! * acc.sources[doc]! })
    }
    mini.release(acc)
    return out
  }

  /** The same evaluation through MiniSearch's own `search`, group by group: the reference. */
  private evaluateWithMiniSearch(state: IndexState, groups: Group[], minMatch: number): Candidate[] {
    const acc = new Map<number, Accumulated>()
    for (const group of groups) {
      for (const r of state.mini.search(toQuery(group.node))) {
        const id = r.id as number
        const a = acc.get(id) ?? { raw: 0, sources: 0, groups: 0 }
        acc.set(id, a)
        a.raw += r.score / Math.max(1, r.queryTerms.length)
        a.sources += r.queryTerms.length
        a.groups++
      }
    }
    const out: Candidate[] = []
    for (const [id, a] of acc) {
      const rec = state.docs.get(id)
      if (rec && a.groups >= minMatch) out.push({ rec, score: a.raw * a.sources })
    }
    return out
  }

  private matchText(state: IndexState, parsed: ParsedQuery): { results: Candidate[], plan: MatchNode[], mode: 'all' | 'partial', detectedSymptoms: string[] } {
    const mini = state.mini
    // Every group evaluated, for highlighting: a document's matched terms are looked up in it.
    const plan: MatchNode[] = []
    const run = (groups: Group[] | null, minMatch: (n: number) => number): Candidate[] => {
      if (!groups || groups.length === 0) return []
      plan.push(...groups.map(g => g.node))
      return this.evaluate(state, groups, minMatch(groups.length))
    }
    const everyGroup = (n: number): number => n
    let slots = this.resolveSlots(mini, parsed, false)
    let spans = this.detectSymptomSpans(slots)
    let results = run(this.planGroups(mini, slots, spans, 'all'), everyGroup)
    let mode: 'all' | 'partial' = 'all'
    if (results.length < THIN_RESULT) {
      // A typo can be a real word ("sitting" for "setting"): try corrections for every long term.
      if (slots.some(s => maxEdits(s.word) > 0 && s.alternatives.some(a => a.term === s.term))) {
        slots = this.resolveSlots(mini, parsed, true)
        spans = this.detectSymptomSpans(slots)
        const more = run(this.planGroups(mini, slots, spans, 'all'), everyGroup)
        if (more.length > results.length) results = more
      }
      if (results.length < THIN_RESULT) {
        // One term short first (cheap: only the two cheapest groups are scored in full), then
        // half of them.
        const groups = this.planGroups(mini, slots, spans, 'partial')!
        const levels = groups.length <= 1 ? [1] : [...new Set([groups.length - 1, Math.ceil(groups.length / 2)])]
        for (const minMatch of levels) {
          const partial = run(groups, () => minMatch)
          if (partial.length > results.length) {
            results = partial
            mode = 'partial'
          }
          if (results.length >= THIN_RESULT) break
        }
      }
    }
    const detectedSymptoms = [...new Set(spans.flatMap(s => s.slugs))].sort()
    return { results, plan, mode, detectedSymptoms }
  }

  // -------------------------------------------------------------------------------------------
  // Ranking, highlights, suggestions

  /** Re-orders hits (the ones that can reach the page) by the evidence factor; see `search`. */
  private applyEvidence(head: Candidate[], symptomSlugs: string[], lookup: EvidenceLookup): Candidate[] {
    const weighed = head.map((c) => {
      const e = lookup(c.rec.doc.id, symptomSlugs)
      const total = e && Number.isFinite(e.total) ? Math.max(0, e.total) : 0
      const confirmed = e && Number.isFinite(e.confirmed) ? Math.min(total, Math.max(0, e.confirmed)) : 0
      const rate = (confirmed + 1) / (total + 2)
      return { c: { rec: c.rec, score: c.score * (1 + EVIDENCE_WEIGHT * rate) }, text: c.score }
    })
    weighed.sort((a, b) => b.c.score - a.c.score || b.text - a.text || a.c.rec.doc.id - b.c.rec.doc.id)
    return weighed.map(w => w.c)
  }

  /** Highlight patterns by matched-term set: the hits of one search mostly share theirs. */
  private readonly patterns = new Map<string, RegExp | null>()

  private highlightPattern(terms: Set<string>, foldCase: boolean): RegExp | null {
    const sorted = [...terms].sort()
    const key = `${foldCase ? 'i' : 'c'}:${sorted.join(' ')}`
    let pattern = this.patterns.get(key)
    if (pattern === undefined) {
      if (this.patterns.size > 1000) this.patterns.clear()
      pattern = buildHighlightPattern(sorted, foldCase)
      this.patterns.set(key, pattern)
    }
    if (pattern) pattern.lastIndex = 0
    return pattern
  }

  private termOf(word: string): string | null {
    return this.indexTerm(word)
  }

  /** Splits a short field value into plain-text parts, marking the words that matched. */
  private markWords(text: string, matched: Set<string>): SnippetPart[] | null {
    const parts: SnippetPart[] = []
    let cursor = 0
    let any = false
    for (const span of wordSpans(text)) {
      const term = this.termOf(span.word)
      if (term === null || !matched.has(term)) continue
      if (span.start > cursor) parts.push({ text: text.slice(cursor, span.start), match: false })
      parts.push({ text: text.slice(span.start, span.end), match: true })
      cursor = span.end
      any = true
    }
    if (!any) return null
    if (cursor < text.length) parts.push({ text: text.slice(cursor), match: false })
    return parts
  }

  /**
   * The stretch of long text with the most distinct matched terms, split into parts. Words are
   * found by a pattern of the matched stems (a stem begins its inflected forms, bar y → ies)
   * and each candidate is confirmed through the index's own term function, so only real
   * matches are marked and the rest of the text is never tokenised.
   */
  private textWindow(text: string, matched: Set<string>): Highlight | null {
    // Lowercased once, the text is searched without case folding (offsets unchanged unless a
    // character's lowercase is longer, as with "İ"; then fold instead).
    const lower = text.toLowerCase()
    const folded = lower.length === text.length
    const found: Array<{ start: number, end: number, term: string }> = []
    if (folded) {
      // The words that begin with a matched stem, found with indexOf: the same words the
      // pattern finds (`buildHighlightPattern`), several times faster on long text.
      for (const [start, end] of stemWords(lower, highlightStems(matched))) {
        const term = this.termOf(text.slice(start, end))
        if (term === null || !matched.has(term)) continue
        found.push({ start, end, term })
        if (found.length === MAX_TEXT_MATCHES) break
      }
    }
    else {
      const pattern = this.highlightPattern(matched, true)
      if (!pattern) return null
      for (const m of text.matchAll(pattern)) {
        const term = this.termOf(m[0])
        if (term === null || !matched.has(term)) continue
        found.push({ start: m.index, end: m.index + m[0].length, term })
        if (found.length === MAX_TEXT_MATCHES) break
      }
    }
    if (found.length === 0) return null
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
    const parts: SnippetPart[] = []
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

  private highlightsFor(doc: SearchDocument, match: MatchInfo): Highlight[] {
    const matched = new Set(Object.keys(match))
    const out: Highlight[] = []
    const whole = (field: Highlight['field'], parts: SnippetPart[] | null): void => {
      if (parts) out.push({ field, snippet: parts, clippedStart: false, clippedEnd: false })
    }
    for (const s of doc.symptoms) {
      if (match[s.slug]?.includes('symptomKey')) whole('symptom', [{ text: s.name, match: true }])
      else whole('symptom', this.markWords(s.name, matched))
    }
    whole('title', this.markWords(doc.title, matched))
    let causes = 0
    for (const c of doc.causes) {
      if (causes === 2) break
      const parts = this.markWords(c.name, matched)
      if (parts) {
        whole('cause', parts)
        causes++
      }
    }
    let steps = 0
    for (const t of doc.stepTitles) {
      if (steps === 2) break
      const parts = this.markWords(t, matched)
      if (parts) {
        whole('step', parts)
        steps++
      }
    }
    const inText = new Set(Object.keys(match).filter(term => match[term]!.includes('text')))
    const w = this.textWindow(doc.text, inText)
    if (w) out.push(w)
    return out.slice(0, MAX_HIGHLIGHTS)
  }

  private suggest(parsed: ParsedQuery): Array<{ slug: string, name: string }> {
    if (this.symptomVocabulary.size === 0) return []
    const queries: Query[] = []
    parsed.terms.forEach((term, i) => {
      const word = parsed.words[i]!
      const prefix = parsed.lastTermIsPrefix && i === parsed.terms.length - 1 && term.length >= 3
      // The vocabulary is a few hundred phrases: fuzzy from 4 letters costs nothing here.
      const edits = (w: string): number => (w.length >= 4 ? Math.max(1, maxEdits(w)) : 0)
      queries.push({ queries: [term], prefix, fuzzy: edits(term) })
      if (word !== term && term !== NEGATION_TERM) queries.push({ queries: [word], prefix, fuzzy: edits(word) })
    })
    const seen = new Set<string>()
    const out: Array<{ slug: string, name: string }> = []
    for (const r of this.suggestionIndex.search({ combineWith: 'OR', queries })) {
      const slug = r.slug as string
      if (seen.has(slug)) continue
      seen.add(slug)
      const entry = this.symptomVocabulary.get(slug)
      if (entry) out.push({ slug, name: entry.name })
      if (out.length === MAX_SUGGESTIONS) break
    }
    return out
  }
}

/**
 * The candidates that can appear in the first `pageEnd` places, best first: the ones scoring at
 * least the pageEnd-th best score ÷ `slack` (slack > 1 leaves room for evidence to lift a
 * hit by that factor). A numeric sort of the scores finds the threshold, so only this head is
 * sorted with a comparator.
 */
function topCandidates(candidates: Candidate[], pageEnd: number, slack: number): Candidate[] {
  if (candidates.length > 2 * pageEnd) {
    const scores = Float64Array.from(candidates, c => c.score).sort()
    const cut = scores[scores.length - pageEnd]! / slack
    candidates = candidates.filter(c => c.score >= cut)
  }
  return candidates.sort(byScore)
}

function toQuery(node: MatchNode): Query {
  if (node.kind === 'term') return { queries: [node.term], prefix: node.prefix, fuzzy: false, fields: [...node.fields], boostTerm: () => node.weight }
  return { combineWith: node.kind === 'and' ? 'AND' : 'OR', queries: node.children.map(toQuery) }
}

function escapeRegExp(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')
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

function dedupeAlternatives(alternatives: Alternative[]): Alternative[] {
  const byTerm = new Map<string, Alternative>()
  for (const a of alternatives) {
    const prev = byTerm.get(a.term)
    if (!prev || (a.prefix && !prev.prefix) || (a.prefix === prev.prefix && a.weight > prev.weight)) byTerm.set(a.term, a)
  }
  return [...byTerm.values()]
}
