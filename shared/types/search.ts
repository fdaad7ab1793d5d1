import type { SymptomDto } from './procedure-api'

// What GET /api/search answers, stated once for the server (server/api/search.get.ts checks its
// answer against it with `satisfies`) and the browser (the search box, the results page).

/** Plain text; `match` marks the words the query matched. Rendered as text, never as HTML. */
export interface SearchSnippetPart { text: string, match: boolean }

export type SearchHighlightField = 'symptom' | 'title' | 'cause' | 'step' | 'text'

export interface SearchHighlight {
  field: SearchHighlightField
  /** Consecutive parts of the field's own text, in order. */
  snippet: SearchSnippetPart[]
  /** The snippet starts after / ends before the field's text does (show an ellipsis). */
  clippedStart: boolean
  clippedEnd: boolean
}

export interface SearchFacetValue { value: string, label: string, count: number }

export interface SearchFacets { deviceType: SearchFacetValue[], symptom: SearchFacetValue[], hazard: SearchFacetValue[] }

/**
 * 'all': every query term matched; 'partial': too few did, so hits match at least half of the
 * terms; 'browse': filters only, no text; 'none': nothing asked.
 */
export type SearchMode = 'all' | 'partial' | 'browse' | 'none'

export interface SearchHitDto {
  slug: string
  title: string
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  /** Carried so a list can flag mains / stored-energy work before the procedure is opened. */
  hazards: string[]
  /** Text relevance × evidence factor (0 for filter-only listings). */
  score: number
  highlights: SearchHighlight[]
}

export interface ProcedureSearchAnswer {
  hits: SearchHitDto[]
  total: number
  facets: SearchFacets
  /** Closest symptom names/synonyms to the query ("did you mean"), best first. */
  suggestions: Array<{ slug: string, name: string }>
  mode: SearchMode
}

/** GET /api/symptoms/match: a symptom the picker's typed words find; `via`, the synonym that matched when the name did not. */
export interface SymptomMatchDto { symptom: SymptomDto, via: string | null }
