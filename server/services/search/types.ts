/**
 * What the procedure search takes in and gives back. The answer's parts that reach the browser
 * are the shared DTO types (`#shared/types/search`); the server adds procedure ids, the symptoms
 * it recognised and its own timing.
 */
import type { SearchFacets, SearchHitDto, SearchMode } from '../../../shared/types/search'

export type { SearchFacetValue, SearchFacets, SearchHighlight, SearchHighlightField, SearchMode, SearchSnippetPart } from '../../../shared/types/search'

/** One published procedure as the index sees it (the index keeps its own copy). */
export type SearchDocument = {
  /** Procedure id. */
  id: number
  slug: string
  title: string
  /** Models and boards the procedure is written for; with the title, where its model codes are read. */
  appliesTo?: string[]
  deviceType: { slug: string, name: string }
  symptoms: Array<{ slug: string, name: string }>
  hazards: string[]
  causes: Array<{ key: string, name: string }>
  stepTitles: string[]
  /** Summary, cause details, instructions, fix and verification as plain text. */
  text: string
  /** ISO 8601; orders filter-only listings (newest first). */
  publishedAt?: string
}

export type SymptomVocabularyEntry = { slug: string, name: string, synonyms: string[] }
export type DeviceTypeVocabularyEntry = { slug: string, name: string }
export type SearchVocabulary = { symptoms: SymptomVocabularyEntry[], deviceTypes: DeviceTypeVocabularyEntry[] }

export type SearchRequest = {
  q?: string
  deviceType?: string
  symptom?: string
  hazard?: string
  limit?: number
  offset?: number
}

/**
 * How often this procedure's causes were confirmed in repair records for the given symptoms.
 * `undefined` means no records. Supplied by the caller (the repair-record store).
 */
export type EvidenceLookup = (docId: number, symptomSlugs: string[]) => { confirmed: number, total: number } | undefined

export type SearchHit = SearchHitDto & { id: number }

export type SearchResponse = {
  hits: SearchHit[]
  total: number
  facets: SearchFacets
  suggestions: Array<{ slug: string, name: string }>
  /** Symptoms the query names (by vocabulary name or synonym), used for evidence weighting. */
  detectedSymptoms: string[]
  mode: SearchMode
  /** Time spent answering, for benchmarks; not sent to the browser. */
  tookMs: number
}

export const SEARCH_LIMITS = { defaultLimit: 20, maxLimit: 100, maxOffset: 10_000 } as const
