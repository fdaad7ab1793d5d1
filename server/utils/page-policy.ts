// The Content-Security-Policy of server-rendered pages (server/plugins/page-security.ts).

/** An opening script or style tag that has no nonce yet. */
const TAG = /<(script|style)\b(?![^>]*\bnonce=)/gi

/** Gives every script and style element in a chunk of Nuxt's own markup the response's nonce. */
export function withNonce(chunk: string, nonce: string): string {
  return chunk.replace(TAG, `<$1 nonce="${nonce}"`)
}

export function pagePolicy(nonce: string): string {
  return [
    `default-src 'self'`,
    `script-src 'self' 'nonce-${nonce}'`,
    `style-src 'self' 'nonce-${nonce}'`,
    `style-src-attr 'unsafe-inline'`,
    `img-src 'self' data: blob:`,
    // The build inlines the smallest Literata subsets as data: URLs; a font cannot run code.
    `font-src 'self' data:`,
    `connect-src 'self'`,
    `object-src 'none'`,
    `base-uri 'self'`,
    `form-action 'self'`,
    `frame-ancestors 'none'`,
  ].join('; ')
}
