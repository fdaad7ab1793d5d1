/**
 * One term's postings in one field of the search index: document short id → term frequency.
 *
 * A `Map<number, number>` per term and field would hold 2.3 million entries for 10,000
 * procedures, a large share of the index's heap and of its build time (every entry is a
 * hash-table slot the garbage collector copies and scans). `Postings` has a Map's interface,
 * but holds the entries as [id, tf] pairs in one Int32Array (outside the scanned heap), sorted
 * by id: the term index hands out short ids in increasing order and never reuses one, so adding
 * a document only ever appends.
 *
 * Differences from a Map:
 * - iteration is in ascending id order (for the index, the same as insertion order);
 * - keys must be integers in [0, 2^31) and values integers in [1, 2^31) (term counts), else
 *   `set` throws a RangeError;
 * - an iterator resumes after the last id it yielded when entries were compacted or inserted
 *   meanwhile, so deleting while iterating visits every other entry once, as with a Map.
 * Deleting marks the pair (tf 0); marked pairs are squeezed out when the array would grow.
 * tests/unit/search-postings.test.ts holds it to a Map under random operation sequences.
 */
const MAX_INT32 = 2 ** 31 - 1

function checkEntry(key: number, value: number): void {
  if (!Number.isInteger(key) || key < 0 || key > MAX_INT32) throw new RangeError(`Postings: id ${key} is not an integer in [0, 2^31)`)
  if (!Number.isInteger(value) || value < 1 || value > MAX_INT32) throw new RangeError(`Postings: frequency ${value} is not an integer in [1, 2^31)`)
}

export class Postings implements Map<number, number> {
  /** [id, tf] pairs, ids ascending; tf 0 marks a deleted pair. */
  private pairs: Int32Array
  /** Pairs in use, deleted ones included. */
  private used = 0
  private live = 0
  /** Bumped whenever pairs move, so iterators know to find their place again. */
  private epoch = 0

  constructor(capacity = 1) {
    this.pairs = new Int32Array(2 * Math.max(1, capacity))
  }

  get size(): number {
    return this.live
  }

  get [Symbol.toStringTag](): string {
    return 'Postings'
  }

  /** Raw view for tight loops: pairs [0, length) of `data`, skipping those with tf 0. */
  get data(): Int32Array {
    return this.pairs
  }

  get length(): number {
    return this.used
  }

  /**
   * Bulk indexing: one more occurrence of the term in document `id`, which must be the last
   * id added or a new, higher one. The frequency stops at `cap`. Returns whether the document
   * is new to this list.
   */
  bump(id: number, cap: number): boolean {
    if (this.used > 0) {
      const last = 2 * (this.used - 1)
      const lastId = this.pairs[last]!
      if (lastId === id) {
        const tf = this.pairs[last + 1]!
        if (tf === 0) {
          this.pairs[last + 1] = 1
          this.live++
          return true
        }
        if (tf < cap) this.pairs[last + 1] = tf + 1
        return false
      }
      if (lastId > id) throw new RangeError(`Postings: bump of id ${id} below the last id ${lastId}`)
    }
    checkEntry(id, 1)
    this.append(id, 1)
    return true
  }

  get(key: number): number | undefined {
    const i = this.find(key)
    return i < 0 ? undefined : this.pairs[2 * i + 1]
  }

  has(key: number): boolean {
    return this.find(key) >= 0
  }

  set(key: number, value: number): this {
    checkEntry(key, value)
    const at = this.lowerBound(key)
    if (at < this.used && this.pairs[2 * at] === key) {
      if (this.pairs[2 * at + 1] === 0) this.live++
      this.pairs[2 * at + 1] = value
    }
    else if (at === this.used) {
      this.append(key, value)
    }
    else {
      // A new id below the highest: never from the index (ids only grow), kept correct anyway.
      this.makeRoom()
      const pos = this.lowerBound(key)
      this.pairs.copyWithin(2 * pos + 2, 2 * pos, 2 * this.used)
      this.pairs[2 * pos] = key
      this.pairs[2 * pos + 1] = value
      this.used++
      this.live++
      this.epoch++
    }
    return this
  }

  delete(key: number): boolean {
    const i = this.find(key)
    if (i < 0) return false
    this.pairs[2 * i + 1] = 0
    this.live--
    if (this.live === 0) this.clear()
    return true
  }

  clear(): void {
    if (this.used === 0) return
    this.used = 0
    this.live = 0
    this.epoch++
  }

  forEach(callback: (value: number, key: number, map: Map<number, number>) => void, thisArg?: unknown): void {
    for (const [key, value] of this) callback.call(thisArg, value, key, this)
  }

  * entries(): MapIterator<[number, number]> {
    // Position and last id yielded: if pairs move meanwhile, resume after that id.
    let i = 0
    let epoch = this.epoch
    let lastKey = -1
    for (;;) {
      if (epoch !== this.epoch) {
        i = this.lowerBound(lastKey + 1)
        epoch = this.epoch
      }
      while (i < this.used && this.pairs[2 * i + 1] === 0) i++
      if (i >= this.used) return undefined
      lastKey = this.pairs[2 * i]!
      const value = this.pairs[2 * i + 1]!
      i++
      yield [lastKey, value]
    }
  }

  * keys(): MapIterator<number> {
    for (const [key] of this.entries()) yield key
  }

  * values(): MapIterator<number> {
    for (const [, value] of this.entries()) yield value
  }

  [Symbol.iterator](): MapIterator<[number, number]> {
    return this.entries()
  }

  private append(key: number, value: number): void {
    if (2 * this.used === this.pairs.length) this.makeRoom()
    this.pairs[2 * this.used] = key
    this.pairs[2 * this.used + 1] = value
    this.used++
    this.live++
  }

  /** Ensures a free pair at the end: squeezes deleted pairs out when they are half, else grows. */
  private makeRoom(): void {
    if (2 * this.used < this.pairs.length) return
    if (2 * this.live <= this.used) {
      let out = 0
      for (let i = 0; i < this.used; i++) {
        const tf = this.pairs[2 * i + 1]!
        if (tf === 0) continue
        this.pairs[2 * out] = this.pairs[2 * i]!
        this.pairs[2 * out + 1] = tf
        out++
      }
      this.used = out
      this.epoch++
      if (2 * this.used < this.pairs.length) return
    }
    // Full here (2 * used === length), so the whole array is copied.
    const grown = new Int32Array(this.pairs.length * 2)
    grown.set(this.pairs)
    this.pairs = grown
  }

  /** First pair index whose id is ≥ key. */
  private lowerBound(key: number): number {
    const used = this.used
    if (used === 0 || this.pairs[2 * (used - 1)]! < key) return used
    let lo = 0
    let hi = used
    while (lo < hi) {
      const mid = (lo + hi) >>> 1
      if (this.pairs[2 * mid]! < key) lo = mid + 1
      else hi = mid
    }
    return lo
  }

  /** Pair index of a live entry, or -1. */
  private find(key: number): number {
    const i = this.lowerBound(key)
    return i < this.used && this.pairs[2 * i] === key && this.pairs[2 * i + 1] !== 0 ? i : -1
  }
}
