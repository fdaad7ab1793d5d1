const HERE = 'http://benchlore.invalid'

/**
 * Where to go after signing in: a path of this app, or the home page. Browsers read "//host",
 * "/\host" and a path with a tab or line break inside ("/\t/host") as another site, and turn a
 * backslash into a slash, so any of those (and anything not starting with one slash) is refused;
 * what is left must still resolve to this origin.
 */
export function safeNextPath(next: unknown): string {
  if (typeof next !== 'string' || !next.startsWith('/') || next.startsWith('//')) return '/'
  // eslint-disable-next-line no-control-regex -- control characters are exactly what is refused
  if (/[\\\u0000-\u001F\u007F]/.test(next)) return '/'
  try {
    const url = new URL(next, HERE)
    return url.origin === HERE ? `${url.pathname}${url.search}${url.hash}` : '/'
  }
  catch {
    return '/'
  }
}
