import createDOMPurify from 'dompurify'
import { JSDOM } from 'jsdom'
import { LRUCache } from 'lru-cache'
import { createMarkdownRenderer, type Purifier } from '#shared/utils/markdown'

// One jsdom window grows with use, so it is replaced after a number of renders.
const RENDERS_PER_WINDOW = 2000
let render: ((md: string) => string) | undefined
let uses = 0

// Rendering is a pure function of the text, and sanitising through jsdom costs milliseconds per
// field: every read of a procedure would pay it again. Recently rendered texts are kept, bounded
// by their total length; a text larger than a hundredth of that is rendered every time.
// Emptied only by eviction (least recently used first): a rendered text never goes stale.
const CACHE_CHARS = 8_000_000
const cache = new LRUCache<string, string>({
  max: 50_000,
  maxSize: CACHE_CHARS,
  maxEntrySize: CACHE_CHARS / 100,
  sizeCalculation: (html, markdown) => markdown.length + html.length,
})

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
  if (hit !== undefined) return hit
  const html = renderUncached(markdown)
  cache.set(markdown, html)
  return html
}
