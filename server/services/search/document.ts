/**
 * From a published revision to what the search index holds. The caller decides which revision
 * that is (the published one of a non-retired procedure); this only translates it.
 */
import MarkdownIt from 'markdown-it'
import { RevisionContent, type RevisionContentInput } from '../../../shared/types/procedure'
import type { SearchDocument, SearchVocabulary } from './types'

// Raw HTML is parsed as HTML (and then left out) rather than kept as literal text.
const markdown = new MarkdownIt({ html: true, linkify: false })

type MarkdownToken = ReturnType<typeof markdown.parse>[number]

/** The readable text of Markdown: words of paragraphs, headings, lists, code and image alt text; no markup. */
export function markdownToText(source: string): string {
  if (!source) return ''
  const blocks: string[] = []
  const inline = (children: MarkdownToken[]): string => {
    let out = ''
    for (const t of children) {
      if (t.type === 'text' || t.type === 'code_inline') out += t.content
      else if (t.type === 'softbreak' || t.type === 'hardbreak') out += ' '
      else if (t.type === 'image') out += inline(t.children ?? [])
    }
    return out
  }
  for (const token of markdown.parse(source, {})) {
    if (token.type === 'inline') blocks.push(inline(token.children ?? []))
    else if (token.type === 'fence' || token.type === 'code_block') blocks.push(token.content.trimEnd())
  }
  return blocks
    .map(b => b.trim())
    .filter(Boolean)
    .join('\n')
}

function humanise(slug: string): string {
  const words = slug.replace(/-/g, ' ')
  return words.charAt(0).toUpperCase() + words.slice(1)
}

/**
 * A search document for one procedure's published revision. Content is validated (and its
 * defaults applied) by the same schema the editor and the server use; names of the device
 * type and symptoms come from the vocabulary (a slug it does not know is shown humanised).
 */
export function toSearchDocument(
  procedureId: number,
  slug: string,
  content: RevisionContentInput | RevisionContent,
  vocabulary: SearchVocabulary,
  publishedAt?: string,
): SearchDocument {
  const c = RevisionContent.parse(content)
  const device = vocabulary.deviceTypes.find(d => d.slug === c.deviceType)
  const symptomName = (s: string): string => vocabulary.symptoms.find(v => v.slug === s)?.name ?? humanise(s)
  const text = [
    markdownToText(c.summary),
    c.appliesTo.length ? `Applies to: ${c.appliesTo.join(', ')}.` : '',
    ...c.causes.map(cause => markdownToText(cause.detail)),
    ...c.steps.map(step => markdownToText(step.instruction)),
    ...c.parts.map(p => [p.name, p.partNumber, ...p.substitutes].filter(Boolean).join(', ')),
    markdownToText(c.fix),
    markdownToText(c.verification),
  ]
    .filter(Boolean)
    .join('\n')
  return {
    id: procedureId,
    slug,
    title: c.title,
    appliesTo: [...c.appliesTo],
    deviceType: { slug: c.deviceType, name: device?.name ?? humanise(c.deviceType) },
    symptoms: c.symptoms.map(s => ({ slug: s, name: symptomName(s) })),
    hazards: [...c.hazards],
    causes: c.causes.map(cause => ({ key: cause.key, name: cause.name })),
    stepTitles: c.steps.map(step => step.title),
    text,
    ...(publishedAt !== undefined ? { publishedAt } : {}),
  }
}
