import { describe, expect, it } from 'vitest'
import { roleAtLeast, ROLES } from '../../shared/types/roles'

describe('roles include the ones below them', () => {
  it.each([
    ['technician', 'technician', true], ['technician', 'author', false],
    ['author', 'technician', true], ['author', 'editor', false],
    ['editor', 'author', true], ['editor', 'admin', false],
    ['admin', 'technician', true], ['admin', 'admin', true],
  ] as const)('%s has %s: %s', (role, needed, expected) => {
    expect(roleAtLeast(role, needed)).toBe(expected)
  })
  it('knows no role for nobody', () => {
    for (const r of ROLES) expect(roleAtLeast(undefined, r)).toBe(false)
  })
})
