import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { Postings } from '../../server/services/search/postings'

// The reference is JavaScript's own Map (ECMAScript semantics): Postings stands in for a
// Map<number, number> per term and field, iterating in ascending id order.

type Op
  = | { kind: 'append', value: number }
    | { kind: 'set', key: number, value: number }
    | { kind: 'delete', key: number }
    | { kind: 'bump', next: boolean, cap: number }
    | { kind: 'clear' }

const opArb: fc.Arbitrary<Op> = fc.oneof(
  { weight: 6, arbitrary: fc.record({ kind: fc.constant('append' as const), value: fc.integer({ min: 1, max: 9 }) }) },
  { weight: 3, arbitrary: fc.record({ kind: fc.constant('set' as const), key: fc.integer({ min: 0, max: 40 }), value: fc.integer({ min: 1, max: 2 ** 31 - 1 }) }) },
  { weight: 4, arbitrary: fc.record({ kind: fc.constant('delete' as const), key: fc.integer({ min: 0, max: 40 }) }) },
  { weight: 4, arbitrary: fc.record({ kind: fc.constant('bump' as const), next: fc.boolean(), cap: fc.integer({ min: 1, max: 4 }) }) },
  { weight: 1, arbitrary: fc.record({ kind: fc.constant('clear' as const) }) },
)

const sortedEntries = (m: Map<number, number>): Array<[number, number]> => [...m].sort((a, b) => a[0] - b[0])

/** Applies one operation to both; `maxEver` is the highest id either has held. */
function apply(op: Op, postings: Postings, reference: Map<number, number>, state: { maxEver: number }): void {
  switch (op.kind) {
    case 'append': {
      const key = ++state.maxEver
      postings.set(key, op.value)
      reference.set(key, op.value)
      break
    }
    case 'set':
      postings.set(op.key, op.value)
      reference.set(op.key, op.value)
      state.maxEver = Math.max(state.maxEver, op.key)
      break
    case 'delete':
      expect(postings.delete(op.key)).toBe(reference.delete(op.key))
      break
    case 'bump': {
      // Bulk indexing's contract: the highest id held, or a new higher one.
      const key = op.next || state.maxEver < 0 ? ++state.maxEver : state.maxEver
      const had = reference.get(key)
      expect(postings.bump(key, op.cap)).toBe(had === undefined)
      reference.set(key, had === undefined ? 1 : had < op.cap ? had + 1 : had)
      break
    }
    case 'clear':
      postings.clear()
      reference.clear()
      break
  }
}

describe('Postings behaves as a Map<number, number> in id order', () => {
  it('agrees with a Map after every operation of random sequences', () => {
    fc.assert(
      fc.property(fc.array(opArb, { maxLength: 120 }), (ops) => {
        const postings = new Postings(1)
        const reference = new Map<number, number>()
        const state = { maxEver: -1 }
        for (const op of ops) {
          apply(op, postings, reference, state)
          expect(postings.size).toBe(reference.size)
          expect([...postings]).toEqual(sortedEntries(reference))
          expect([...postings.keys()]).toEqual(sortedEntries(reference).map(([k]) => k))
          expect([...postings.values()]).toEqual(sortedEntries(reference).map(([, v]) => v))
          for (let k = -1; k <= state.maxEver + 1; k++) {
            expect(postings.get(k)).toBe(reference.get(k))
            expect(postings.has(k)).toBe(reference.has(k))
          }
          // The raw view the scorer reads: live pairs are exactly the entries.
          const live: Array<[number, number]> = []
          for (let i = 0; i < postings.length; i++) if (postings.data[2 * i + 1]) live.push([postings.data[2 * i]!, postings.data[2 * i + 1]!])
          expect(live).toEqual(sortedEntries(reference))
        }
      }),
      { numRuns: 400 },
    )
  })

  it('iterates like a Map while entries are deleted and appended during the iteration', () => {
    // Walking a list while deleting entries as it goes (as a clean-up pass would). Ids added in
    // increasing order, so the Map's insertion order is id order and the two must agree exactly.
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 60 }),
        fc.array(fc.record({ deleteAhead: fc.integer({ min: -3, max: 5 }), deleteCurrent: fc.boolean(), append: fc.boolean() }), { maxLength: 80 }),
        (n, steps) => {
          const postings = new Postings(1)
          const reference = new Map<number, number>()
          for (let id = 0; id < n; id++) {
            postings.set(id * 2, 1 + (id % 3))
            reference.set(id * 2, 1 + (id % 3))
          }
          let nextId = 2 * n
          const seenPostings: number[] = []
          const seenReference: number[] = []
          const itP = postings.keys()
          const itR = reference.keys()
          for (let s = 0; ; s++) {
            const p = itP.next()
            const r = itR.next()
            expect(p.done).toBe(r.done)
            if (p.done || r.done) break
            seenPostings.push(p.value)
            seenReference.push(r.value)
            const step = steps[s % Math.max(1, steps.length)]
            if (!step) continue
            if (step.deleteCurrent) expect(postings.delete(p.value)).toBe(reference.delete(r.value))
            const ahead = p.value + 2 * step.deleteAhead
            expect(postings.delete(ahead)).toBe(reference.delete(ahead))
            if (step.append && nextId < 400) {
              postings.set(nextId, 1)
              reference.set(nextId, 1)
              nextId += 2
            }
          }
          expect(seenPostings).toEqual(seenReference)
          expect([...postings]).toEqual([...reference])
        },
      ),
      { numRuns: 400 },
    )
  })

  it('refuses what is not a short id and a term count', () => {
    const postings = new Postings()
    for (const [key, value] of [[-1, 1], [1.5, 1], [2 ** 31, 1], [1, 0], [1, -2], [1, 2.5], [1, Number.NaN], [1, 2 ** 31]] as const) {
      expect(() => postings.set(key, value), `${key} → ${value}`).toThrow(RangeError)
    }
    postings.set(5, 1)
    expect(() => postings.bump(4, 3)).toThrow(RangeError)
    expect(postings.size).toBe(1)
  })
})
