import { JSDOM } from 'jsdom'
import { expect } from 'vitest'

// Vectors in the style of the OWASP XSS Filter Evasion Cheat Sheet, written into every
// Markdown field; the rendered HTML must carry no script, no event handler, no javascript: URL.
export const XSS_VECTORS = [
  '<script>alert(1)</script>',
  '<img src=x onerror=alert(1)>',
  '<IMG SRC="javascript:alert(\'XSS\');">',
  '<svg/onload=alert(1)>',
  '<iframe src="javascript:alert(1)"></iframe>',
  '[click](javascript:alert(1))',
  '[click](JaVaScRiPt:alert(1))',
  '[click](&#106;avascript:alert(1))',
  '![x](javascript:alert(1))',
  '![x](https://evil.example/x.png)',
  '<a href="data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==">x</a>',
  '[x](data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==)',
  '<div style="background:url(javascript:alert(1))">x</div>',
  '<body onload=alert(1)>',
  '"><script>alert(1)</script>',
  '<math><mtext><table><mglyph><style><img src=x onerror=alert(1)>',
  '[a](vbscript:msgbox(1))',
  '<details open ontoggle=alert(1)>',
]

/** Parses the HTML as a browser would and inspects the elements and attributes it produced. */
export function assertSafeHtml(html: string) {
  const doc = new JSDOM(`<body>${html}</body>`).window.document
  const elements = [...doc.body.querySelectorAll('*')]
  expect(elements.map(e => e.tagName.toLowerCase()).filter(t => ['script', 'iframe', 'svg', 'math', 'style', 'object', 'embed', 'details', 'form', 'input'].includes(t))).toEqual([])
  for (const el of elements) {
    for (const attr of [...el.attributes]) {
      expect(attr.name, `event handler on <${el.tagName}>`).not.toMatch(/^on/i)
      if (attr.name === 'href' || attr.name === 'src') expect(attr.value.trim()).not.toMatch(/^(javascript|vbscript|data):/i)
      if (attr.name === 'src') expect(attr.value, 'images only from the file route').toMatch(/^\/api\/files\/\d+/)
      expect(attr.name).not.toBe('style')
    }
  }
}
