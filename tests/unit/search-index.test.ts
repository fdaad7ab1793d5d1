import MiniSearch, { type Query } from 'minisearch'
import { describe, expect, it } from 'vitest'
import { generateCorpus } from '../../scripts/bench/corpus'
import { TermAnalyser } from '../../server/services/search/analysis'
import { ProcedureSearchIndex } from '../../server/services/search/engine'
import { FIELDS, FIELD_BOOSTS, fieldReaders, fieldTexts } from '../../server/services/search/fields'
import type { PlanRound } from '../../server/services/search/planner'
import { BM25_PARAMS, bm25Idf, bm25PlusScore, bm25PlusTf } from '../../server/services/search/scores'
import type { FieldReader, MatchNode } from '../../server/services/search/term-index'
import type { SearchDocument, SearchHit, SearchVocabulary } from '../../server/services/search/types'

// The term index is this project's own; its scores must be MiniSearch 7.2's (the reference
// library), so they are compared here with what MiniSearch's public `search` gives for the same
// documents, tokens and query trees.

const ids = (hits: SearchHit[]): number[] => hits.map(h => h.id)

/** A field's index terms in order, repeats capped as the term index caps them. */
function indexTerms(reader: FieldReader, text: string): string[] {
  const out: string[] = []
  const counts = new Map<string, number>()
  for (const token of reader.tokens(text)) {
    const term = reader.term(token)
    if (term === null) continue
    const n = (counts.get(term) ?? 0) + 1
    counts.set(term, n)
    if (n <= reader.cap) out.push(term)
  }
  return out
}

/** MiniSearch over the same fields, tokens, boosts and BM25+ parameters, through its public API only. */
function referenceIndex(docs: SearchDocument[], vocabulary: SearchVocabulary): MiniSearch<SearchDocument> {
  const symptoms = new Map(vocabulary.symptoms.map(s => [s.slug, s]))
  const readers = fieldReaders(new TermAnalyser())
  const mini = new MiniSearch<SearchDocument>({
    fields: [...FIELDS],
    idField: 'id',
    extractField: (doc, field) => (field === 'id' ? doc.id : fieldTexts(doc, symptoms)[FIELDS.indexOf(field as (typeof FIELDS)[number])]),
    tokenize: (text, field) => indexTerms(readers[FIELDS.indexOf(field as (typeof FIELDS)[number])]!, text),
    processTerm: term => term,
    searchOptions: { tokenize: term => [term], processTerm: term => term, boost: { ...FIELD_BOOSTS }, bm25: { ...BM25_PARAMS } },
  })
  mini.addAll(docs)
  return mini
}

function toQuery(node: MatchNode): Query {
  if (node.kind === 'term') return { queries: [node.term], prefix: node.prefix, fuzzy: false, fields: [...node.fields], boostTerm: () => node.weight }
  return { combineWith: node.kind === 'and' ? 'AND' : 'OR', queries: node.children.map(toQuery) }
}

/**
 * A plan round evaluated group by group through MiniSearch's `search`: a document's score is
 * the sum of its groups' BM25+ sums × the query terms it matched (MiniSearch's own combination),
 * kept when it matched at least `minMatch` groups. Best first, ties by id.
 */
function referenceMatch(mini: MiniSearch<SearchDocument>, round: PlanRound): Array<{ id: number, score: number }> {
  const acc = new Map<number, { raw: number, sources: number, groups: number }>()
  for (const group of round.groups) {
    for (const r of mini.search(toQuery(group))) {
      const a = acc.get(r.id as number) ?? { raw: 0, sources: 0, groups: 0 }
      acc.set(r.id as number, a)
      a.raw += r.score / Math.max(1, r.queryTerms.length)
      a.sources += r.queryTerms.length
      a.groups++
    }
  }
  return [...acc]
    .filter(([, a]) => a.groups >= round.minMatch)
    .map(([id, a]) => ({ id, score: a.raw * a.sources }))
    .sort((a, b) => b.score - a.score || a.id - b.id)
}

describe('BM25+ scoring', () => {
  // Lv & Zhai, "Lower-bounding term frequency normalization" (CIKM 2011), BM25+ with the idf and
  // defaults of MiniSearch 7.2 (k = 1.2, b = 0.7, d = 0.5); values worked by hand from the formula.
  it.each([
    // tf, df, N, |field|, avg |field|, idf = ln(1 + (N − df + ½)/(df + ½)), tf part = d + tf(k+1)/(tf + k(1 − b + b·|f|/avg))
    { tf: 1, df: 1, n: 10, len: 5, avg: 5, idf: Math.log(1 + 9.5 / 1.5), tfPart: 0.5 + 2.2 / 2.2 },
    { tf: 3, df: 4, n: 100, len: 20, avg: 10, idf: Math.log(1 + 96.5 / 4.5), tfPart: 0.5 + 6.6 / (3 + 1.2 * (0.3 + 1.4)) },
    { tf: 2, df: 100, n: 100, len: 2, avg: 8, idf: Math.log(1 + 0.5 / 100.5), tfPart: 0.5 + 4.4 / (2 + 1.2 * (0.3 + 0.175)) },
  ])('tf $tf, df $df of $n, field $len against $avg', ({ tf, df, n, len, avg, idf, tfPart }) => {
    expect(bm25Idf(df, n)).toBeCloseTo(idf, 12)
    expect(bm25PlusTf(tf, len, avg)).toBeCloseTo(tfPart, 12)
    expect(bm25PlusScore(tf, df, n, len, avg)).toBeCloseTo(idf * tfPart, 12)
  })
})

describe('the term index agrees with MiniSearch', () => {
  // Queries end in a space, so no prefix completion (whose cap the reference does not apply)
  // is involved.
  it('ranks and scores exactly as MiniSearch search does, on the plan the search ran', () => {
    // Over 500 procedures, so the common-term rule is in play too.
    const corpus = generateCorpus(520, 7)
    const index = new ProcedureSearchIndex(corpus.vocabulary)
    index.build(corpus.docs)
    const reference = referenceIndex(corpus.docs, corpus.vocabulary)
    let compared = 0
    for (const { q } of corpus.queries.slice(0, 48)) {
      const { round } = index.explain(`${q} `)
      expect(round, q).not.toBeNull()
      const expected = referenceMatch(reference, round!)
      const got = index.search({ q: `${q} `, limit: 100 })
      expect(got.total, q).toBe(expected.length)
      expect(ids(got.hits), q).toEqual(expected.slice(0, 100).map(e => e.id))
      got.hits.forEach((h, i) => expect(h.score, q).toBeCloseTo(expected[i]!.score, 9))
      compared += got.hits.length
    }
    expect(compared).toBeGreaterThan(300)
  }, 60_000)

  it('keeps agreeing after discards and replacements (its statistics are those of the live documents)', () => {
    const corpus = generateCorpus(300, 5)
    const index = new ProcedureSearchIndex(corpus.vocabulary)
    index.build(corpus.docs)
    for (const d of corpus.docs) if (d.id % 3 === 0) index.discard(d.id)
    const kept = corpus.docs.filter(d => d.id % 3 !== 0)
    const edited = kept.map((d, i) => (i % 5 === 0 ? { ...d, title: `${d.title} revised`, text: `${d.text} Check the snubber capacitor again.` } : d))
    for (const [i, d] of edited.entries()) if (i % 5 === 0) index.upsert(d)
    const reference = referenceIndex(edited, corpus.vocabulary)
    for (const q of ['snubber capacitor revised ', ...corpus.queries.slice(0, 30).map(x => `${x.q} `)]) {
      const { round } = index.explain(q)
      const expected = round ? referenceMatch(reference, round) : []
      const got = index.search({ q, limit: 100 })
      expect(ids(got.hits), q).toEqual(expected.slice(0, 100).map(e => e.id))
      got.hits.forEach((h, i) => expect(h.score, q).toBeCloseTo(expected[i]!.score, 9))
    }
  }, 60_000)
})

describe('building the index', () => {
  it('builds in bulk exactly what one-by-one adds build', () => {
    const corpus = generateCorpus(300, 11)
    const bulk = new ProcedureSearchIndex(corpus.vocabulary)
    bulk.build(corpus.docs)
    const single = new ProcedureSearchIndex(corpus.vocabulary)
    for (const d of corpus.docs) single.upsert(d)
    // The index itself: every posting, field length and average.
    const [a, b] = [bulk.snapshot(), single.snapshot()]
    expect(Object.keys(a.postings).length).toBeGreaterThan(3000)
    expect(a).toEqual(b)
    for (const { q } of corpus.queries.slice(0, 40)) {
      const x = bulk.search({ q, limit: 50 })
      const y = single.search({ q, limit: 50 })
      expect(ids(x.hits), q).toEqual(ids(y.hits))
      x.hits.forEach((h, i) => expect(h.score).toBeCloseTo(y.hits[i]!.score, 9))
    }
  }, 30_000)

  it('after discards and replacements holds exactly what a fresh build of the same documents holds', () => {
    const corpus = generateCorpus(300, 5)
    const index = new ProcedureSearchIndex(corpus.vocabulary)
    index.build(corpus.docs)
    const kept = corpus.docs.filter(d => d.id % 3 !== 0)
    for (const d of corpus.docs) if (d.id % 3 === 0) index.discard(d.id)
    const edited = kept.map((d, i) => (i % 5 === 0 ? { ...d, title: `${d.title} revised`, text: `${d.text} Check the snubber capacitor again.` } : d))
    for (const [i, d] of edited.entries()) if (i % 5 === 0) index.upsert(d)
    const fresh = new ProcedureSearchIndex(corpus.vocabulary)
    fresh.build(edited)
    const [a, b] = [index.snapshot(), fresh.snapshot()]
    expect(a.postings).toEqual(b.postings)
    expect(a.fieldLengths).toEqual(b.fieldLengths)
    a.averages.forEach((avg, f) => expect(avg).toBeCloseTo(b.averages[f]!, 9))
    for (const { q } of corpus.queries.slice(0, 30)) expect(ids(index.search({ q, limit: 50 }).hits), q).toEqual(ids(fresh.search({ q, limit: 50 }).hits))
  }, 30_000)

  it('a vocabulary change re-indexes the symptom\'s documents as a fresh build under the new vocabulary would', () => {
    const corpus = generateCorpus(200, 3)
    const index = new ProcedureSearchIndex(corpus.vocabulary)
    index.build(corpus.docs)
    const changed = { ...corpus.vocabulary, symptoms: corpus.vocabulary.symptoms.map((s, i) => (i % 4 === 0 ? { ...s, synonyms: [...s.synonyms.slice(1), 'gremlin in the works'] } : s)) }
    index.setVocabulary(changed)
    const fresh = new ProcedureSearchIndex(changed)
    fresh.build(corpus.docs)
    expect(index.snapshot()).toEqual(fresh.snapshot())
  }, 30_000)
})
