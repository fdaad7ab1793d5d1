import createDOMPurify from 'dompurify'
import { JSDOM } from 'jsdom'
import { createMarkdownRenderer, type Purifier } from '#shared/utils/markdown'

// One jsdom window grows with use, so it is replaced after a number of renders.
const RENDERS_PER_WINDOW = 2000
let render: ((md: string) => string) | undefined
let uses = 0

export function renderMarkdown(markdown: string): string {
  if (!render || uses >= RENDERS_PER_WINDOW) {
    const window = new JSDOM('').window
    render = createMarkdownRenderer(createDOMPurify(window as unknown as Window & typeof globalThis) as unknown as Purifier)
    uses = 0
  }
  uses++
  return render(markdown)
}
