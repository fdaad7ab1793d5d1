/**
 * The inverted index behind procedure search: for each index term and field, the documents that
 * hold it and how often (packed `Postings` lists), each document's field lengths, and the
 * scoring of a query tree over them.
 *
 * It is this project's own, rather than MiniSearch's, because the query planner needs what that
 * library's public API does not give: posting counts (the cost of a term), and scoring for a
 * given set of candidate documents only. Through MiniSearch's `search` every posting of every
 * term is scored on every keystroke (measured on the 10k procedures of scripts/bench/corpus.ts:
 * p50 37–51 ms, p95 98–178 ms against targets of 5 and 20 ms), and its `addAll` takes over 6 s
 * and 130 MB where this index takes about 2 s and 90 MB. The scores are MiniSearch's own
 * (BM25+ with its parameters, field boosts, prefix weighting; see `./scores`), and
 * tests/unit/search-index.test.ts holds this index to that library's `search` result for
 * result.
 *
 * Documents are numbered by short ids in the order they arrive (never reused), so postings only
 * ever append. Discarding removes a document's postings at once: it re-reads the field texts
 * kept for it, so the statistics are always those of the live documents.
 *
 * @example
 *   const index = new TermIndex([{ name: 'title', boost: 1, tokens: t => t.split(' '), term: t => t.toLowerCase(), cap: Infinity }])
 *   index.add(7, ['Dimmer buzzes'])
 *   index.matchGroups([{ kind: 'term', term: 'buzzes', prefix: false, weight: 1, fields: ['title'] }], 1) // [{ short: 0, score: … }]
 */
import { LRUCache } from 'lru-cache'
import SearchableMap from 'minisearch/SearchableMap'
import { Postings } from './postings'
import { BM25_PARAMS, DocScores, bm25Idf, bm25PlusTf, type Bm25Params } from './scores'

/** How one field's text becomes index terms. */
export type FieldReader = {
  readonly name: string
  /** Multiplies the field's scores. */
  readonly boost: number
  /** Raw tokens of the field's text, in order. */
  tokens: (text: string) => string[]
  /** The index term of a token (null: not indexed). A pure function of the token. */
  term: (token: string) => string | null
  /** At most this many occurrences of a term count per document. */
  readonly cap: number
}

/** One query term: itself, or (prefix) the index terms it begins, in some fields, weighted. */
export type TermNode = { kind: 'term', term: string, prefix: boolean, weight: number, fields: readonly string[] }
/** A query tree over index terms: AND needs every child, OR any; scores add up. */
export type MatchNode = TermNode | { kind: 'and' | 'or', children: MatchNode[] }

/** A document's total for a query, by short id. */
export type ScoredDocument = { short: number, score: number }

export type IndexSnapshot = {
  /** "term field" → [document id, term frequency] pairs, by id. */
  postings: Record<string, Array<[number, number]>>
  fieldLengths: Record<number, number[]>
  averages: number[]
}

/** Postings of one term, by field id. */
type TermEntry = Array<Postings | undefined>
type DerivedTerm = { term: string, entry: TermEntry, weight: number, fieldIds: number[], postings: number }

/** Completions of a prefix weigh less the more they add: MiniSearch's default prefix weight. */
const PREFIX_WEIGHT = 0.375
/** A prefix keeps its most frequent completions: "co" must not score hundreds of words. */
const MAX_COMPLETIONS = 64
/** Libraries smaller than this keep every term in every field: their statistics are noise. */
const UBIQUITY_MIN_DOCUMENTS = 500
const UBIQUITOUS_SHARE = 0.8

export class TermIndex {
  protected readonly fields: readonly FieldReader[]
  protected readonly fieldIds: Readonly<Record<string, number>>
  protected readonly bm25: Bm25Params
  /** The long free-text field, where words common to nearly every document are not searched. */
  protected readonly bodyField: number
  protected readonly terms = new SearchableMap<TermEntry>()
  protected readonly shortIds = new Map<number, number>()
  /** Document id by short id; -1 once discarded. */
  protected ids: number[] = []
  /** The texts each document was indexed from, by short id: what discarding reads again. */
  protected texts: Array<readonly string[] | undefined> = []
  /** Distinct terms per field and document, by field id then short id. */
  protected lengths: Uint32Array[]
  protected lengthTotals: number[]
  protected count = 0
  protected nextShort = 0
  /** Bumped by every change; prefix completions are kept for one version. */
  protected version = 0
  /** While a bulk session runs, per field: token → the postings list its term goes to (null: none). */
  protected bulk: Array<Map<string, Postings | null>> | null = null
  /**
   * Completions per prefix and fields: typing asks for the same ones again and again. Emptied
   * whenever a document is added or discarded (the terms and their counts change); bounded by
   * count.
   */
  protected readonly completions = new LRUCache<string, DerivedTerm[]>({ max: 5000 })
  protected completionsVersion = -1
  /** What each term node reaches; nodes are made per search and go with it. */
  protected readonly derived = new WeakMap<TermNode, DerivedTerm[]>()
  /** Score arrays for reuse, so a search allocates almost nothing. */
  protected readonly pool: DocScores[] = []

  constructor(fields: readonly FieldReader[], options: { bodyField?: string, bm25?: Bm25Params } = {}) {
    this.fields = fields
    this.fieldIds = Object.fromEntries(fields.map((f, i) => [f.name, i]))
    this.bm25 = options.bm25 ?? BM25_PARAMS
    this.bodyField = options.bodyField === undefined ? -1 : (this.fieldIds[options.bodyField] ?? -1)
    this.lengths = fields.map(() => new Uint32Array(64))
    this.lengthTotals = fields.map(() => 0)
  }

  /** Documents indexed. */
  get size(): number {
    return this.count
  }

  /** @example index.has(42) // true once add(42, …) ran, false after discard(42) */
  has(id: number): boolean {
    return this.shortIds.has(id)
  }

  /**
   * The short id scoring reports a document under.
   *
   * @example index.matchGroups(groups, 1).some(m => m.short === index.shortIdOf(42))
   */
  shortIdOf(id: number): number | undefined {
    return this.shortIds.get(id)
  }

  /**
   * Indexes a document from its field texts (in the order of the field readers). The id must
   * not be indexed already (use `replace`).
   *
   * @example index.add(42, ['Touch dimmer pulses', 'BT136 substitutes…'])
   */
  add(id: number, texts: readonly string[]): void {
    if (this.shortIds.has(id)) throw new Error(`TermIndex: document ${id} is indexed already`)
    const short = this.nextShort++
    this.ensureCapacity(short + 1)
    this.shortIds.set(id, short)
    this.ids[short] = id
    this.texts[short] = texts
    this.count++
    this.version++
    this.fields.forEach((reader, f) => {
      const cache = this.bulk?.[f]
      let distinct = 0
      for (const token of reader.tokens(texts[f] ?? '')) {
        let list = cache?.get(token)
        if (list === undefined) {
          const term = reader.term(token)
          list = term === null ? null : this.listFor(term, f)
          cache?.set(token, list)
        }
        if (list !== null && list.bump(short, reader.cap)) distinct++
      }
      this.lengths[f]![short] = distinct
      this.lengthTotals[f]! += distinct
    })
  }

  /**
   * Indexes many documents in one bulk session: each distinct token is turned into its term
   * and found in the dictionary once for the whole session instead of at every occurrence
   * (the larger part of build time).
   */
  addAll(documents: Iterable<{ id: number, texts: readonly string[] }>): void {
    const own = this.bulk === null
    if (own) this.beginBulk()
    try {
      for (const d of documents) this.add(d.id, d.texts)
    }
    finally {
      if (own) this.endBulk()
    }
  }

  /** Starts a bulk session spanning several `addAll` calls (a chunked build); `endBulk` ends it. */
  beginBulk(): void {
    this.bulk = this.fields.map(() => new Map())
  }

  endBulk(): void {
    this.bulk = null
  }

  /**
   * Removes a document and its postings. Returns whether it was indexed.
   *
   * @example index.discard(42) // true; a second call false
   */
  discard(id: number): boolean {
    const short = this.shortIds.get(id)
    if (short === undefined) return false
    // Lists the session points to may be dropped below.
    this.endBulk()
    const texts = this.texts[short]!
    this.fields.forEach((reader, f) => {
      const seen = new Set<string>()
      for (const token of reader.tokens(texts[f] ?? '')) {
        const term = reader.term(token)
        if (term === null || seen.has(term)) continue
        seen.add(term)
        const entry = this.terms.get(term)
        const list = entry?.[f]
        if (!entry || !list) continue
        list.delete(short)
        if (list.size > 0) continue
        entry[f] = undefined
        if (entry.every(l => l === undefined)) this.terms.delete(term)
      }
      this.lengthTotals[f]! -= this.lengths[f]![short]!
      this.lengths[f]![short] = 0
    })
    this.shortIds.delete(id)
    this.ids[short] = -1
    this.texts[short] = undefined
    this.count--
    this.version++
    return true
  }

  /**
   * Indexes a document's new texts in place of its old ones (it gets a new short id).
   *
   * @example index.replace(42, textsOfTheNewRevision)
   */
  replace(id: number, texts: readonly string[]): void {
    this.discard(id)
    this.add(id, texts)
  }

  /** @example index.hasTerm('flicker') // some live document holds it, in some field */
  hasTerm(term: string): boolean {
    return this.terms.has(term)
  }

  /** @example index.hasTermWithPrefix('flick') // true when 'flicker' is indexed */
  hasTermWithPrefix(prefix: string): boolean {
    return !this.terms.atPrefix(prefix).keys().next().done
  }

  /**
   * The fields worth searching a term in. A term found in the body text of at least
   * UBIQUITOUS_SHARE of a large library ("check", "not", "output", "board") says nothing
   * there: its BM25 weight in that field is near zero (idf ≤ ln 1.25 ≈ 0.22), while visiting
   * its postings is most of a query's cost. Such a term is searched in the other fields only;
   * when it has none there it is no search term at all (null), like a stop word.
   *
   * @example index.fieldsFor('check', WORD_FIELDS) // every field but the body text, in a large library
   */
  fieldsFor(term: string, fields: readonly string[]): readonly string[] | null {
    const body = this.fields[this.bodyField]?.name
    if (body === undefined || this.count < UBIQUITY_MIN_DOCUMENTS || !fields.includes(body)) return fields
    const entry = this.terms.get(term)
    if (!entry) return fields
    if ((entry[this.bodyField]?.size ?? 0) < UBIQUITOUS_SHARE * this.count) return fields
    const short = fields.filter(f => f !== body)
    return short.some(f => (entry[this.fieldIds[f]!]?.size ?? 0) > 0) ? short : null
  }

  /** Postings a query tree visits when scored in full: its cost. */
  protected nodeCost(node: MatchNode): number {
    if (node.kind !== 'term') return node.children.reduce((sum, child) => sum + this.nodeCost(child), 0)
    return this.derivedTerms(node).reduce((sum, d) => sum + d.postings, 0)
  }

  /**
   * The documents matching at least `minMatch` of the groups (top-level query trees), with
   * their scores as MiniSearch scores a combination: the sum of the groups' BM25+ scores ×
   * the number of query terms matched.
   *
   * Cheapest groups first: a document matching `minMatch` of n groups must match one of the
   * n − minMatch + 1 cheapest (pigeonhole), so only those "seed" groups are scored over all
   * their postings. The other groups are scored for the candidates found so far only, and
   * candidates that can no longer reach `minMatch` are dropped as we go. For an all-terms
   * match this is a rarest-first intersection: the common words of a query ("output",
   * "load", "not") confirm a few hundred candidates instead of scoring the whole library.
   *
   * @example index.matchGroups([flickerNode, halfNode], 2) // documents matching both
   */
  matchGroups(groups: readonly MatchNode[], minMatch: number): ScoredDocument[] {
    const order = groups.map(node => ({ node, cost: this.nodeCost(node) })).sort((a, b) => a.cost - b.cost)
    const seeds = order.length - minMatch + 1
    const acc = this.acquire()
    for (let g = 0; g < order.length; g++) {
      const seeding = g < seeds
      const part = this.scoreNode(order[g]!.node, seeding ? null : acc)
      for (const doc of part.docs) {
        if (!seeding && !acc.has(doc)) continue
        acc.add(doc, part.score[doc]!, part.sources[doc]!)
        acc.groups[doc] = acc.groups[doc]! + 1
      }
      this.release(part)
      const remaining = order.length - g - 1
      if (g >= seeds - 1) {
        // A dropped document leaves `docs` but stays marked: it may still be scored through
        // a posting list, harmlessly, as only `docs` is read out.
        acc.keep(doc => acc.groups[doc]! + remaining >= minMatch)
      }
      if (acc.docs.length === 0) break
    }
    const out: ScoredDocument[] = []
    for (const doc of acc.docs) if (acc.groups[doc]! >= minMatch) out.push({ short: doc, score: acc.score[doc]! * acc.sources[doc]! })
    this.release(acc)
    return out
  }

  /**
   * Which index terms of the query trees a document holds, and in which fields: what its
   * highlights mark.
   *
   * @example index.matchedTerms(plan, 42) // { flicker: ['symptoms', 'text'], dim: ['title'] }
   */
  matchedTerms(nodes: readonly MatchNode[], id: number): Record<string, string[]> {
    const info: Record<string, string[]> = {}
    const doc = this.shortIds.get(id)
    if (doc === undefined) return info
    const visit = (node: MatchNode): void => {
      if (node.kind !== 'term') {
        node.children.forEach(visit)
        return
      }
      for (const { term, entry, fieldIds } of this.derivedTerms(node)) {
        for (const f of fieldIds) {
          if (!entry[f]?.has(doc)) continue
          const fields = info[term] ?? (info[term] = [])
          const name = this.fields[f]!.name
          if (!fields.includes(name)) fields.push(name)
        }
      }
    }
    nodes.forEach(visit)
    return info
  }

  /**
   * Every posting, field length and average, by document id: what two ways of indexing must
   * agree on.
   *
   * @example expect(bulkBuilt.snapshot()).toEqual(addedOneByOne.snapshot())
   */
  snapshot(): IndexSnapshot {
    const postings: IndexSnapshot['postings'] = {}
    for (const [term, entry] of this.terms) {
      entry.forEach((list, f) => {
        if (!list || list.size === 0) return
        postings[`${term} ${this.fields[f]!.name}`] = [...list].map(([doc, tf]): [number, number] => [this.ids[doc]!, tf]).sort((a, b) => a[0] - b[0])
      })
    }
    const fieldLengths: IndexSnapshot['fieldLengths'] = {}
    for (const [id, short] of this.shortIds) fieldLengths[id] = this.fields.map((_, f) => this.lengths[f]![short]!)
    return { postings, fieldLengths, averages: this.fields.map((_, f) => this.average(f)) }
  }

  // -------------------------------------------------------------------------------------------

  protected average(f: number): number {
    return this.count === 0 ? 0 : this.lengthTotals[f]! / this.count
  }

  protected ensureCapacity(size: number): void {
    if (this.lengths[0]!.length >= size) return
    const capacity = Math.max(size, this.lengths[0]!.length * 2)
    this.lengths = this.lengths.map((old) => {
      const grown = new Uint32Array(capacity)
      grown.set(old)
      return grown
    })
  }

  /** The postings list of a term in a field, made on first use. */
  protected listFor(term: string, f: number): Postings {
    const entry = this.terms.fetch(term, () => [])
    return entry[f] ?? (entry[f] = new Postings())
  }

  protected postingsIn(entry: TermEntry, fieldIds: readonly number[]): number {
    let n = 0
    for (const f of fieldIds) n += entry[f]?.size ?? 0
    return n
  }

  protected derivedTerms(node: TermNode): DerivedTerm[] {
    let out = this.derived.get(node)
    if (out) return out
    if (node.prefix) {
      if (this.completionsVersion !== this.version) {
        this.completions.clear()
        this.completionsVersion = this.version
      }
      const key = `${node.term}|${node.fields.join()}`
      out = this.completions.get(key)
      if (!out) this.completions.set(key, (out = this.completionsOf(node)))
    }
    else {
      out = []
      const entry = this.terms.get(node.term)
      const fieldIds = node.fields.map(f => this.fieldIds[f]!)
      if (entry) out.push({ term: node.term, entry, weight: 1, fieldIds, postings: this.postingsIn(entry, fieldIds) })
    }
    this.derived.set(node, out)
    return out
  }

  /**
   * The index terms a prefix begins, weighted as MiniSearch weighs prefix matches (the prefix
   * itself 1, a completion less the more letters it adds), keeping the MAX_COMPLETIONS most
   * frequent.
   */
  protected completionsOf(node: TermNode): DerivedTerm[] {
    let out: DerivedTerm[] = []
    // A word being typed is heading for a word: part numbers and codes are typed with digits.
    const wordOnly = !/\d/.test(node.term)
    for (const [term, entry] of this.terms.atPrefix(node.term)) {
      if (wordOnly && /\d/.test(term)) continue
      const fields = this.fieldsFor(term, node.fields)
      if (!fields) continue
      const extra = term.length - node.term.length
      const fieldIds = fields.map(f => this.fieldIds[f]!)
      out.push({ term, entry, weight: extra === 0 ? 1 : (PREFIX_WEIGHT * term.length) / (term.length + 0.3 * extra), fieldIds, postings: this.postingsIn(entry, fieldIds) })
    }
    if (out.length > MAX_COMPLETIONS) out = out.sort((a, b) => b.postings - a.postings || (a.term < b.term ? -1 : 1)).slice(0, MAX_COMPLETIONS)
    return out
  }

  /**
   * Scores a query tree: over every posting when `candidates` is null, else for those documents
   * only. AND needs every child (the cheapest is scored first, the others only for what it
   * found), OR any. The caller releases the result.
   */
  protected scoreNode(node: MatchNode, candidates: DocScores | null): DocScores {
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

  /**
   * One term node: for each index term it reaches and each field, BM25+ × field boost × term
   * weight, visiting whichever is smaller, the postings or the candidates.
   */
  protected scoreTerm(node: TermNode, candidates: DocScores | null): DocScores {
    const out = this.acquire()
    const total = this.count
    for (const { entry, weight, fieldIds } of this.derivedTerms(node)) {
      for (const f of fieldIds) {
        const list = entry[f]
        if (!list) continue
        const factor = weight * node.weight * this.fields[f]!.boost * bm25Idf(list.size, total)
        const lengths = this.lengths[f]!
        const avgLength = this.average(f)
        if (candidates && candidates.docs.length < list.size) {
          for (const doc of candidates.docs) {
            const tf = list.get(doc)
            if (tf) out.add(doc, factor * bm25PlusTf(tf, lengths[doc]!, avgLength, this.bm25), 1, true)
          }
          continue
        }
        // The packed [id, tf] pairs (tf 0: deleted).
        const pairs = list.data
        const end = 2 * list.length
        for (let i = 0; i < end; i += 2) {
          const tf = pairs[i + 1]!
          if (tf === 0) continue
          const doc = pairs[i]!
          if (candidates && !candidates.has(doc)) continue
          out.add(doc, factor * bm25PlusTf(tf, lengths[doc]!, avgLength, this.bm25), 1, true)
        }
      }
    }
    return out
  }

  protected acquire(): DocScores {
    const scores = this.pool.pop() ?? new DocScores()
    scores.reset(this.nextShort)
    return scores
  }

  protected release(scores: DocScores): void {
    if (this.pool.length < 16) this.pool.push(scores)
  }
}
