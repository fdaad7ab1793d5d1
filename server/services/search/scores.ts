/**
 * Relevance arithmetic of the term index: BM25+ in small pure functions, and the per-document
 * sums a search accumulates.
 *
 * BM25+ (Lv & Zhai, "Lower-bounding term frequency normalization", CIKM 2011) with the
 * parameters and the idf form MiniSearch 7 uses, so scores mean the same as that library's
 * (tests/unit/search-index.test.ts compares them with its `search`).
 */

export type Bm25Params = { readonly k: number, readonly b: number, readonly d: number }

/** Term-frequency saturation k, length normalisation b, and the lower bound d of BM25+. */
export const BM25_PARAMS: Bm25Params = { k: 1.2, b: 0.7, d: 0.5 }

/**
 * Inverse document frequency: rare terms weigh more. Never negative (the +1 inside the log), so
 * a term found in every document still adds a little.
 *
 * @example bm25Idf(1, 10_000) // ≈ 8.8; bm25Idf(10_000, 10_000) ≈ 0.00005
 */
export function bm25Idf(matching: number, total: number): number {
  return Math.log(1 + (total - matching + 0.5) / (matching + 0.5))
}

/**
 * The term-frequency part of BM25+: grows with the term's count in the field, saturates (k),
 * and is damped in fields longer than average (b); d keeps any match above zero.
 *
 * @example bm25PlusTf(1, 10, 10) // 1.5 with the defaults: d + tf(k+1) / (tf + k)
 */
export function bm25PlusTf(tf: number, fieldLength: number, avgFieldLength: number, params: Bm25Params = BM25_PARAMS): number {
  const { k, b, d } = params
  return d + (tf * (k + 1)) / (tf + k * (1 - b + (b * fieldLength) / avgFieldLength))
}

/** The whole score of one term in one field of one document, before weights and boosts. */
export function bm25PlusScore(tf: number, matching: number, total: number, fieldLength: number, avgFieldLength: number, params: Bm25Params = BM25_PARAMS): number {
  return bm25Idf(matching, total) * bm25PlusTf(tf, fieldLength, avgFieldLength, params)
}

/**
 * Sums per document, dense over the index's short ids; `docs` lists the documents present.
 * `sources` counts the query terms a document matched (the "quality" factor of a combined
 * query); `groups` counts the plan's top-level groups it matched. A stamp marks presence, so
 * reuse needs no clearing.
 */
export class DocScores {
  score = new Float64Array(0)
  sources = new Uint16Array(0)
  groups = new Uint8Array(0)
  docs: number[] = []
  protected mark = new Uint32Array(0)
  protected stamp = 0

  /** Empties the sums, with room for short ids below `size`. */
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

  /**
   * Adds to a document's sums; `once`: its sources count only on first sight (one term).
   *
   * @example scores.add(doc, 2.5, 1, true) // a term's score in one more field of `doc`
   */
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

  /** Drops documents from `docs` (`has` stays true, so callers test `groups` or rebuild). */
  keep(predicate: (doc: number) => boolean): void {
    let w = 0
    for (const doc of this.docs) if (predicate(doc)) this.docs[w++] = doc
    this.docs.length = w
  }
}
