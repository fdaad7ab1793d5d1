import MarkdownIt from 'markdown-it'

/** The part of DOMPurify Benchlore uses (server: over a jsdom window; browser: over window). */
export interface Purifier {
  sanitize: (html: string, config: Record<string, unknown>) => unknown
  addHook: (entryPoint: 'uponSanitizeAttribute', hook: (node: Element, data: { attrName: string, attrValue: string, keepAttr: boolean }) => void) => void
}

/** Images may come only from Benchlore's own file route. */
export const OWN_IMAGE = /^\/api\/files\/\d+(\?size=(thumb|full))?$/
const SAFE_LINK = /^(https?:|mailto:|\/(?!\/)|#)/i

const PURIFY_CONFIG = {
  ALLOWED_TAGS: ['p', 'br', 'strong', 'em', 'code', 'pre', 'ul', 'ol', 'li', 'blockquote', 'a', 'img', 'h3', 'h4', 'h5', 'h6', 'hr', 'table', 'thead', 'tbody', 'tr', 'th', 'td', 'sub', 'sup', 's'],
  ALLOWED_ATTR: ['href', 'src', 'alt', 'title', 'rel', 'target'],
  ALLOW_DATA_ATTR: false,
  ALLOW_ARIA_ATTR: false,
}

/**
 * Markdown → sanitised HTML, identical on both sides: markdown-it with raw HTML off, then
 * DOMPurify with a short allow-list. Links keep only http(s), mailto and relative targets;
 * images only Benchlore's own file route; headings start at h3 so a procedure's own outline
 * stays in charge.
 */
export function createMarkdownRenderer(purify: Purifier) {
  const md = new MarkdownIt({ html: false, linkify: true, breaks: false, typographer: false })
  md.validateLink = (url: string) => SAFE_LINK.test(url.trim()) || OWN_IMAGE.test(url.trim())
  const heading = md.renderer.rules.heading_open
  md.renderer.rules.heading_open = (tokens, idx, options, env, self) => {
    const t = tokens[idx]!
    t.tag = `h${Math.min(6, Math.max(3, Number(t.tag.slice(1)) + 2))}`
    return heading ? heading(tokens, idx, options, env, self) : self.renderToken(tokens, idx, options)
  }
  purify.addHook('uponSanitizeAttribute', (node, data) => {
    const tag = node.nodeName.toLowerCase()
    if (data.attrName === 'src' && (tag !== 'img' || !OWN_IMAGE.test(data.attrValue))) data.keepAttr = false
    if (data.attrName === 'href' && !SAFE_LINK.test(data.attrValue.trim())) data.keepAttr = false
    if (data.attrName === 'target') data.keepAttr = false
  })
  return (markdown: string): string => {
    if (!markdown) return ''
    const html = md.render(markdown.slice(0, 50_000))
    return String(purify.sanitize(html, PURIFY_CONFIG))
  }
}
