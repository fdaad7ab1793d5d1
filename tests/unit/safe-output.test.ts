import { describe, expect, it } from 'vitest'
import { neutraliseCell } from '../../shared/utils/csv'
import { safeNextPath } from '../../shared/utils/redirect'

// Cells from OWASP's CSV Injection page (its examples and its list of leading characters:
// = + - @, tab, carriage return); the full-width signs are common practice.
describe('neutraliseCell', () => {
  it.each([
    ['=HYPERLINK("http://evil.example","open me")', '\'=HYPERLINK("http://evil.example","open me")', 'OWASP: formula'],
    ['@SUM(1+9)*cmd|\' /C calc\'!A0', '\'@SUM(1+9)*cmd|\' /C calc\'!A0', 'OWASP: DDE through @'],
    ['+cmd|\' /C notepad\'!A0', '\'+cmd|\' /C notepad\'!A0', 'OWASP: DDE through +'],
    ['-2+3+cmd|\' /C calc\'!A0', '\'-2+3+cmd|\' /C calc\'!A0', 'OWASP: leading minus'],
    ['\t=1+1', '\'\t=1+1', 'OWASP: tab'],
    ['\r=1+1', '\'\r=1+1', 'OWASP: carriage return'],
    ['\n=1+1', '\'\n=1+1', 'line feed (common practice)'],
    ['＝1+1', '\'＝1+1', 'full-width equals (common practice)'],
    ['VR-240 rev C', 'VR-240 rev C', 'plain text unchanged'],
    ['a=b', 'a=b', 'a sign after the first character is harmless'],
    ['', '', 'empty'],
  ])('%s', (input, expected) => {
    expect(neutraliseCell(input)).toBe(expected)
  })
})

// Open-redirect forms from the OWASP Unvalidated Redirects cheat sheet and browsers' URL parsing
// (WHATWG URL: backslash is a slash, tab and newline are removed).
describe('safeNextPath', () => {
  it.each([
    ['/records?status=closed#top', '/records?status=closed#top'],
    ['/procedures/vr240-stuck-at-full', '/procedures/vr240-stuck-at-full'],
    ['//evil.example', '/'],
    ['/\\evil.example', '/'],
    ['\\\\evil.example', '/'],
    ['/\t/evil.example', '/'],
    ['/\n/evil.example', '/'],
    ['https://evil.example', '/'],
    ['javascript:alert(1)', '/'],
    ['evil.example', '/'],
    [undefined, '/'],
    [['/records'], '/'],
  ])('%j → %s', (input, expected) => {
    expect(safeNextPath(input)).toBe(expected)
  })
})

describe('withNonce', () => {
  it('gives each inline script and style element of Nuxt\'s own markup the nonce, once', async () => {
    const { withNonce } = await import('../../server/utils/page-policy')
    const head = '<script type="importmap">{}</script><style>.a{}</style><link rel="stylesheet" href="/x.css"><script nonce="n1">x</script>'
    expect(withNonce(head, 'abc')).toBe('<script nonce="abc" type="importmap">{}</script><style nonce="abc">.a{}</style><link rel="stylesheet" href="/x.css"><script nonce="n1">x</script>')
  })
})
