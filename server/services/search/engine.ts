/**
 * Symptom-first search over published procedures, held in memory.
 *
 * A junior types what the unit does ("wont dim", "flikers half", "buzz when dimmed low") and
 * must land on the right procedure in the first few results while still typing. The index
 * knows nothing of the database: the caller feeds it `SearchDocument`s (one per published,
 * non-retired procedure) and the symptom vocabulary, and keeps it current with `upsert` and
 * `discard`.
 *
 * `ProcedureSearchIndex` is the front of a few focused parts:
 * - `./query`: what a technician types → search terms (negations, stop words, stems, codes);
 * - `./analysis`, `./fields`: what a procedure says → index terms per field, and the spelling
 *   dictionary of indexed words;
 * - `./term-index`: the inverted index and its BM25+ scoring (`./scores`, `./postings`);
 * - `./symptom-phrases`: the vocabulary's names and synonyms, spotted in a query and suggested;
 * - `./planner`: which terms each query word may match and how far to widen;
 * - `./facets`, `./ranking`, `./highlight`: narrowing and counting, ordering (with repair
 *   evidence), and why each hit matched.
 *
 * What keeps it fast on 10k procedures (measured by scripts/bench/search-core.ts): prefix
 * search only on the last term, with its completions capped; fuzzy matching only for long
 * words, against a dictionary of indexed words rather than the whole term tree; the
 * rarest-first evaluation, which scores common words only for the few candidates left; and
 * leaving the body-text postings of words found in nearly every procedure unvisited.
 *
 * @example
 *   const search = new ProcedureSearchIndex(vocabulary)
 *   await search.buildAsync(documents)
 *   search.search({ q: 'buzz when dimmed low', hazard: 'mains' }, { evidence })
 */
import { TermAnalyser } from './analysis'
import { FacetCodes, HAZARD_LABELS, type FacetCoded, type FacetLabels } from './facets'
import { BODY_FIELD, fieldReaders, fieldTexts } from './fields'
import { Highlighter } from './highlight'
import { QueryPlanner, type PlanRound } from './planner'
import { modelCodes, parseQuery } from './query'
import { EVIDENCE_WEIGHT, applyEvidence, byCodesNamed, topMatches } from './ranking'
import { SymptomPhrases } from './symptom-phrases'
import { TermIndex, type IndexSnapshot, type MatchNode } from './term-index'
import { SEARCH_LIMITS, type DeviceTypeVocabularyEntry, type EvidenceLookup, type SearchDocument, type SearchHit, type SearchRequest, type SearchResponse, type SearchVocabulary, type SymptomVocabularyEntry } from './types'

/**
 * An indexed procedure: our own copy of it, its short id in the term index, its facet codes and
 * the model codes its title and "applies to" name.
 */
type DocRecord = FacetCoded & { doc: SearchDocument, short: number, models: ReadonlySet<string> }

type IndexState = {
  index: TermIndex
  /** By procedure id. */
  records: Map<number, DocRecord>
  /** The same records by short id, which is what scoring yields. */
  byShort: Array<DocRecord | undefined>
  bySymptom: Map<string, Set<number>>
  /** Names seen on documents, for facet labels of values the vocabulary does not know. */
  symptomNames: Map<string, string>
  deviceTypeNames: Map<string, string>
  /** Filter-only listings' order (newest first); dropped by any add or discard. */
  browseOrder: DocRecord[] | null
}

type Match = { rec: DocRecord, id: number, score: number }
type PendingOp = { kind: 'upsert', doc: SearchDocument } | { kind: 'discard', id: number } | { kind: 'vocabulary', slugs: string[] }

export class ProcedureSearchIndex {
  protected state: IndexState
  protected symptomVocabulary = new Map<string, SymptomVocabularyEntry>()
  protected deviceTypeVocabulary = new Map<string, DeviceTypeVocabularyEntry>()
  protected phrases = new SymptomPhrases([])
  /** Shared by every build: its term cache and spelling dictionary only grow with what was seen. */
  protected readonly analyser = new TermAnalyser()
  protected readonly facetCodes = new FacetCodes()
  protected readonly highlighter = new Highlighter(word => this.analyser.term(word))
  protected buildGeneration = 0
  /** Changes made while `buildAsync` runs, applied to the new index before it is swapped in. */
  protected pendingOps: PendingOp[] | null = null

  constructor(vocabulary?: SearchVocabulary) {
    this.state = this.newState()
    if (vocabulary) this.setVocabulary(vocabulary)
  }

  /** Procedures indexed. */
  get size(): number {
    return this.state.records.size
  }

  /** @example search.has(procedure.id) // false once it was discarded */
  has(id: number): boolean {
    return this.state.records.has(id)
  }

  /**
   * For tests: the whole term index in plain data (see `TermIndex.snapshot`).
   *
   * @example expect(afterEdits.snapshot()).toEqual(freshBuild.snapshot())
   */
  snapshot(): IndexSnapshot {
    return this.state.index.snapshot()
  }

  /**
   * Replaces the whole index at once, blocking for the duration (seconds for 10k procedures:
   * see scripts/bench/search-core.ts); a server should use `buildAsync`. Set the vocabulary
   * first, so synonyms are indexed with the documents. Duplicate ids: the last document wins.
   *
   * @example search.build(documents)
   */
  build(docs: readonly SearchDocument[]): void {
    this.buildGeneration++
    this.pendingOps = null
    const state = this.newState()
    const unique = uniqueById(docs)
    state.index.addAll(unique.map(doc => ({ id: doc.id, texts: fieldTexts(doc, this.symptomVocabulary) })))
    for (const doc of unique) this.register(state, doc)
    this.state = state
  }

  /**
   * Builds a new index in chunks, yielding to the event loop between them, and swaps it in
   * when complete; searches keep answering from the previous index meanwhile. Upserts,
   * discards and vocabulary changes made during the build are applied to both. A later
   * build (sync or async) supersedes one in flight, whose promise then resolves unused.
   *
   * @example await search.buildAsync(documents, { chunkSize: 100 })
   */
  async buildAsync(docs: readonly SearchDocument[], options: { chunkSize?: number } = {}): Promise<void> {
    const chunkSize = clampInt(options.chunkSize, 1, 10_000, 100)
    const generation = ++this.buildGeneration
    const ops: PendingOp[] = []
    this.pendingOps = ops
    const state = this.newState()
    const unique = uniqueById(docs)
    // One bulk session for all chunks: nothing else touches the new index until it is swapped in.
    state.index.beginBulk()
    for (let i = 0; i < unique.length; i += chunkSize) {
      await yieldToEventLoop()
      if (generation !== this.buildGeneration) return
      const chunk = unique.slice(i, i + chunkSize)
      state.index.addAll(chunk.map(doc => ({ id: doc.id, texts: fieldTexts(doc, this.symptomVocabulary) })))
      for (const doc of chunk) this.register(state, doc)
    }
    state.index.endBulk()
    if (generation !== this.buildGeneration) return
    for (const op of ops) {
      if (op.kind === 'upsert') this.upsertInto(state, op.doc)
      else if (op.kind === 'discard') this.discardFrom(state, op.id)
      else this.reindexSymptoms(state, op.slugs)
    }
    this.pendingOps = null
    this.state = state
  }

  /**
   * Adds a procedure or replaces its previous version.
   *
   * @example search.upsert(toSearchDocument(id, slug, revision.content, vocabulary))
   */
  upsert(doc: SearchDocument): void {
    this.upsertInto(this.state, doc)
    this.pendingOps?.push({ kind: 'upsert', doc })
  }

  /**
   * Drops a procedure (retired, unpublished). Returns whether it was indexed.
   *
   * @example search.discard(retired.id)
   */
  discard(id: number): boolean {
    const had = this.discardFrom(this.state, id)
    this.pendingOps?.push({ kind: 'discard', id })
    return had
  }

  /**
   * Ids of indexed procedures filed under a symptom: the ones a change to it re-indexes.
   *
   * @example search.documentsAffectedBySymptom('hum-noise') // [3, 9]
   */
  documentsAffectedBySymptom(slug: string): number[] {
    return [...(this.state.bySymptom.get(slug) ?? [])].sort((a, b) => a - b)
  }

  /**
   * Sets the symptom and device-type vocabulary. Query-time expansion (synonym → symptom key)
   * takes effect at once for every document. The documents filed under a symptom whose name or
   * synonyms changed are re-indexed (only those); device-type names only label facets.
   *
   * @example search.setVocabulary({ symptoms, deviceTypes }) // { changedSymptoms: ['hum-noise'], reindexed: 2 }
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
    this.phrases = new SymptomPhrases(next.values())
    const reindexed = this.reindexSymptoms(this.state, changed)
    this.pendingOps?.push({ kind: 'vocabulary', slugs: changed })
    return { changedSymptoms: changed, reindexed }
  }

  /**
   * Answers a search.
   *
   * - Text: see `QueryPlanner`. An empty query (or one of stop words only) with at least one
   *   filter lists the filtered procedures newest first; with no filter it returns no hits and
   *   empty facets (the search page shows its prompt, not the whole library).
   * - Facets are counted over the text-matched set with the OTHER filters applied (see
   *   `FacetCodes.narrow`).
   * - Evidence: with a lookup and at least one queried symptom (named in the query or given as
   *   the symptom filter), each hit's text score T becomes
   *
   *       final = T · (1 + W · r),   r = (confirmed + 1) / (total + 2),   W = EVIDENCE_WEIGHT
   *
   *   (see `evidenceFactor`): evidence re-orders hits whose text scores are within 20 % and can
   *   never lift a weak text match over one more than 20 % stronger; a document that does not
   *   match the text is never a hit at all. Filter-only listings are not re-ordered by evidence.
   *
   * @example search.search({ q: 'flikers half', deviceType: 'rotary-dimmer', limit: 20 })
   */
  search(request: SearchRequest, options: { evidence?: EvidenceLookup } = {}): SearchResponse {
    const started = performance.now()
    const limit = clampInt(request.limit, 1, SEARCH_LIMITS.maxLimit, SEARCH_LIMITS.defaultLimit)
    const offset = clampInt(request.offset, 0, SEARCH_LIMITS.maxOffset, 0)
    const filters = { deviceType: cleanFilter(request.deviceType), symptom: cleanFilter(request.symptom), hazard: cleanFilter(request.hazard) }
    const hasFilter = filters.deviceType !== undefined || filters.symptom !== undefined || filters.hazard !== undefined
    const parsed = parseQuery(request.q)
    const state = this.state

    let matches: Match[]
    let mode: SearchResponse['mode']
    let detected: string[] = []
    let plan: MatchNode[] = []
    if (parsed.terms.length === 0) {
      if (!hasFilter) {
        return { hits: [], total: 0, facets: { deviceType: [], symptom: [], hazard: [] }, suggestions: [], detectedSymptoms: [], mode: 'none', tookMs: performance.now() - started }
      }
      mode = 'browse'
      state.browseOrder ??= [...state.records.values()].sort(newestFirst)
      matches = state.browseOrder.map(rec => ({ rec, id: rec.doc.id, score: 0 }))
    }
    else {
      const text = this.planner(state).match(parsed)
      matches = []
      for (const { short, score } of text.results) {
        const rec = state.byShort[short]
        if (rec) matches.push({ rec, id: rec.doc.id, score })
      }
      plan = text.plan
      mode = text.mode
      detected = text.detectedSymptoms
    }

    const { passing, facets } = this.facetCodes.narrow(matches, m => m.rec, filters, this.facetLabels(state))

    // Only what can reach the page is put in order (browse lists are in order already): the
    // procedures naming the query's model codes first, each tier by text score and evidence.
    const pageEnd = offset + limit
    const evidenceSymptoms = [...new Set([...detected, ...(filters.symptom ? [filters.symptom] : [])])]
    const weighEvidence = mode !== 'browse' && options.evidence !== undefined && evidenceSymptoms.length > 0
    let ranked = passing
    if (mode !== 'browse') {
      ranked = []
      for (const tier of byCodesNamed(passing, m => m.rec.models, parsed.codes)) {
        if (ranked.length >= pageEnd) break
        let head = topMatches(tier, pageEnd - ranked.length, weighEvidence ? 1 + EVIDENCE_WEIGHT : 1)
        if (weighEvidence) head = applyEvidence(head, evidenceSymptoms, options.evidence!)
        ranked.push(...head)
      }
    }

    const hits = ranked.slice(offset, pageEnd).map(m => this.hit(m, state, plan))
    return {
      hits,
      total: passing.length,
      facets,
      suggestions: this.phrases.suggest(parsed),
      detectedSymptoms: detected,
      mode,
      tookMs: performance.now() - started,
    }
  }

  /**
   * How the text of a query was matched: the plan round whose documents the answer lists
   * (null when none matched), the mode and the symptoms recognised. For tests and diagnosis.
   *
   * @example search.explain('wont dim').round?.groups // [{ kind: 'or', children: [...] }]
   */
  explain(q: string): { round: PlanRound | null, mode: 'all' | 'partial' | 'none', detectedSymptoms: string[] } {
    const parsed = parseQuery(q)
    if (parsed.terms.length === 0) return { round: null, mode: 'none', detectedSymptoms: [] }
    const { round, mode, detectedSymptoms } = this.planner(this.state).match(parsed)
    return { round, mode, detectedSymptoms }
  }

  // -------------------------------------------------------------------------------------------

  protected planner(state: IndexState): QueryPlanner {
    return new QueryPlanner(state.index, this.analyser.spelling, this.phrases)
  }

  protected hit(m: Match, state: IndexState, plan: MatchNode[]): SearchHit {
    const doc = m.rec.doc
    return {
      id: doc.id,
      slug: doc.slug,
      title: doc.title,
      deviceType: { slug: doc.deviceType.slug, name: doc.deviceType.name },
      symptoms: doc.symptoms.map(s => ({ slug: s.slug, name: this.symptomVocabulary.get(s.slug)?.name ?? s.name })),
      hazards: [...doc.hazards],
      score: m.score,
      highlights: plan.length ? this.highlighter.highlightsFor(doc, state.index.matchedTerms(plan, doc.id)) : [],
    }
  }

  protected facetLabels(state: IndexState): FacetLabels {
    return {
      deviceType: v => this.deviceTypeVocabulary.get(v)?.name ?? state.deviceTypeNames.get(v) ?? v,
      symptom: v => this.symptomVocabulary.get(v)?.name ?? state.symptomNames.get(v) ?? v,
      hazard: v => HAZARD_LABELS[v] ?? v,
    }
  }

  protected newState(): IndexState {
    return {
      index: new TermIndex(fieldReaders(this.analyser), { bodyField: BODY_FIELD }),
      records: new Map(),
      byShort: [],
      bySymptom: new Map(),
      symptomNames: new Map(),
      deviceTypeNames: new Map(),
      browseOrder: null,
    }
  }

  /** Files an indexed document's record (its short id is read from the term index). */
  protected register(state: IndexState, doc: SearchDocument): void {
    const short = state.index.shortIdOf(doc.id)!
    const rec: DocRecord = {
      doc,
      short,
      device: this.facetCodes.code('device', doc.deviceType.slug),
      symptoms: doc.symptoms.map(s => this.facetCodes.code('symptom', s.slug)),
      hazards: doc.hazards.map(h => this.facetCodes.code('hazard', h)),
      models: new Set(modelCodes([doc.title, ...(doc.appliesTo ?? [])].join('\n'))),
    }
    state.records.set(doc.id, rec)
    state.byShort[short] = rec
    state.browseOrder = null
    state.deviceTypeNames.set(doc.deviceType.slug, doc.deviceType.name)
    for (const s of doc.symptoms) {
      state.symptomNames.set(s.slug, s.name)
      let ids = state.bySymptom.get(s.slug)
      if (!ids) state.bySymptom.set(s.slug, (ids = new Set()))
      ids.add(doc.id)
    }
  }

  protected unregister(state: IndexState, id: number): void {
    const old = state.records.get(id)
    if (!old) return
    state.records.delete(id)
    state.byShort[old.short] = undefined
    state.browseOrder = null
    for (const s of old.doc.symptoms) state.bySymptom.get(s.slug)?.delete(id)
  }

  protected upsertInto(state: IndexState, given: SearchDocument): void {
    const doc = ownCopy(given)
    const texts = fieldTexts(doc, this.symptomVocabulary)
    if (state.index.has(doc.id)) {
      this.unregister(state, doc.id)
      state.index.replace(doc.id, texts)
    }
    else {
      state.index.add(doc.id, texts)
    }
    this.register(state, doc)
  }

  protected discardFrom(state: IndexState, id: number): boolean {
    if (!state.index.discard(id)) return false
    this.unregister(state, id)
    return true
  }

  protected reindexSymptoms(state: IndexState, slugs: readonly string[]): number {
    const affected = new Set<number>()
    for (const slug of slugs) for (const id of state.bySymptom.get(slug) ?? []) affected.add(id)
    for (const id of affected) {
      const { doc } = state.records.get(id)!
      this.unregister(state, id)
      state.index.replace(id, fieldTexts(doc, this.symptomVocabulary))
      this.register(state, doc)
    }
    return affected.size
  }
}

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

function newestFirst(a: DocRecord, b: DocRecord): number {
  const pa = a.doc.publishedAt ?? ''
  const pb = b.doc.publishedAt ?? ''
  if (pa !== pb) return pa < pb ? 1 : -1
  return b.doc.id - a.doc.id
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
    ...(doc.appliesTo !== undefined ? { appliesTo: [...doc.appliesTo] } : {}),
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
