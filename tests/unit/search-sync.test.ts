import { describe, expect, it } from 'vitest'
import { isDomainError } from '../../server/services/errors'
import { SearchSync } from '../../server/services/search/sync'

describe('SearchSync', () => {
  it('answers a search it cannot serve yet with the domain\'s "unavailable" error, not an HTTP one', async () => {
    // The database never answers: the index cannot load.
    class Unloadable extends SearchSync {
      override start(): Promise<void> {
        return Promise.reject(new Error('database away'))
      }
    }
    const error = await new Unloadable().search({ q: 'flicker' }).catch((e: unknown) => e)
    expect(isDomainError(error)).toBe(true)
    expect(error).toMatchObject({ kind: 'unavailable', message: expect.stringMatching(/still being built/) })
  })
})
