import createDOMPurify from 'dompurify'
import { JSDOM } from 'jsdom'
import { createMarkdownRenderer, type Purifier } from '#shared/utils/markdown'

// One jsdom window grows with use, so it is replaced after a number of renders.
const RENDERS_PER_WINDOW = 2000
let render: ((md: string) => string) | undefined
let uses = 0

// Rendering is a pure function of the text, and sanitising through jsdom costs milliseconds per
// field: every read of a procedure would pay it again. Recently rendered texts are kept (least
// recently used dropped first), bounded by their total length.
const CACHE_CHARS = 8_000_000
const cache = new Map<string, string>()
let cachedChars = 0

function renderUncached(markdown: string): string {
  if (!render || uses >= RENDERS_PER_WINDOW) {
    const window = new JSDOM('').window
    render = createMarkdownRenderer(createDOMPurify(window as unknown as Window & typeof globalThis) as unknown as Purifier)
    uses = 0
  }
  uses++
  return render(markdown)
}

export function renderMarkdown(markdown: string): string {
  if (markdown === '') return renderUncached(markdown)
  const hit = cache.get(markdown)
  if (hit !== undefined) {
    cache.delete(markdown)
    cache.set(markdown, hit)
    return hit
  }
  const html = renderUncached(markdown)
  const size = markdown.length + html.length
  if (size > CACHE_CHARS / 100) return html
  cache.set(markdown, html)
  cachedChars += size
  for (const [k, v] of cache) {
    if (cachedChars <= CACHE_CHARS) break
    cache.delete(k)
    cachedChars -= k.length + v.length
  }
  return html
}
