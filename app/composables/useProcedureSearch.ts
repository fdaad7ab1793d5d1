import { onScopeDispose, ref, shallowRef, toValue, watch, type MaybeRefOrGetter } from 'vue'
import type { LocationQuery, LocationQueryRaw } from 'vue-router'
import { HAZARDS, type Hazard } from '#shared/types/hazards'
import type { ProcedureSearchAnswer, SearchFacetValue, SearchHighlight, SearchHitDto, SearchSnippetPart } from '#shared/types/search'

/** What the results page keeps in its address, so a search can be shared and revisited. */
export interface SearchFilters {
  q: string
  deviceType?: string
  symptom?: string
  hazard?: Hazard
  offset: number
}

export type FacetName = 'deviceType' | 'symptom' | 'hazard'

export const RESULTS_PAGE_SIZE = 20

/** Hazards that get the warning mark in a list before the procedure is even opened. */
export const MARKED_HAZARDS: readonly string[] = ['mains', 'stored_energy']

function queryText(v: LocationQuery[string] | undefined): string | undefined {
  const first = Array.isArray(v) ? v[0] : v
  return typeof first === 'string' && first.trim() !== '' ? first.trim() : undefined
}

/** The results page's state read from its address; anything malformed is simply left out. */
export function readSearchFilters(query: LocationQuery): SearchFilters {
  const hazard = queryText(query.hazard)
  const offset = Number.parseInt(queryText(query.offset) ?? '0', 10)
  return {
    q: queryText(query.q) ?? '',
    deviceType: queryText(query.deviceType),
    symptom: queryText(query.symptom),
    hazard: (HAZARDS as readonly string[]).includes(hazard ?? '') ? hazard as Hazard : undefined,
    offset: Number.isFinite(offset) && offset > 0 ? Math.min(offset, 10_000) : 0,
  }
}

/** The address query for some filters; empty values stay out so shared links stay short. */
export function searchQuery(filters: Partial<SearchFilters>): LocationQueryRaw {
  const out: LocationQueryRaw = {}
  if (filters.q) out.q = filters.q
  if (filters.deviceType) out.deviceType = filters.deviceType
  if (filters.symptom) out.symptom = filters.symptom
  if (filters.hazard) out.hazard = filters.hazard
  if (filters.offset) out.offset = String(filters.offset)
  return out
}

/** One facet as the results page shows it: its values, the chosen one included. */
export interface FacetGroup { facet: FacetName, legend: string, values: SearchFacetValue[] }

const FACET_LEGENDS: ReadonlyArray<{ facet: FacetName, legend: string }> = [
  { facet: 'deviceType', legend: 'Device type' },
  { facet: 'symptom', legend: 'Symptom' },
  { facet: 'hazard', legend: 'Hazard' },
]

/**
 * The facets worth offering for an answer. A chosen filter stays (to be switched off) even when
 * the answer has no count for it; a single value that every result already has narrows
 * nothing and is left out unless chosen.
 */
export function facetGroups(answer: Pick<ProcedureSearchAnswer, 'facets' | 'hits' | 'total'>, filters: SearchFilters): FacetGroup[] {
  const valuesOf = (facet: FacetName): SearchFacetValue[] => {
    const values = answer.facets[facet]
    const chosen = filters[facet]
    if (!chosen || values.some(v => v.value === chosen)) return values
    const hit = answer.hits[0]
    const label = facet === 'deviceType'
      ? (hit?.deviceType.slug === chosen ? hit.deviceType.name : undefined)
      : facet === 'symptom' ? hit?.symptoms.find(s => s.slug === chosen)?.name : undefined
    return [{ value: chosen, label: label ?? chosen.replace(/[-_]/g, ' '), count: 0 }, ...values]
  }
  const narrows = (facet: FacetName, values: SearchFacetValue[]) =>
    values.length > 1 || values.some(v => v.value === filters[facet] || v.count < answer.total)
  return FACET_LEGENDS.map(g => ({ ...g, values: valuesOf(g.facet) })).filter(g => g.values.length > 0 && narrows(g.facet, g.values))
}

/** The same search with one facet switched on (or off, when it is already the chosen one). Paging starts again. */
export function toggledFacet(filters: SearchFilters, facet: FacetName, value: string): LocationQueryRaw {
  return searchQuery({ ...filters, [facet]: filters[facet] === value ? undefined : value, offset: 0 })
}

/**
 * Whether the query itself names a symptom of the vocabulary: some hit shows one of its symptoms
 * with every word matched. Only then are "did you mean" symptoms noise; a query of loose words
 * or typos ("stuk at ful") gets them.
 */
export function namesKnownSymptom(answer: Pick<ProcedureSearchAnswer, 'hits'>): boolean {
  return answer.hits.some(hit => hit.highlights.some(h =>
    h.field === 'symptom' && h.snippet.every(part => part.match || !/[\p{L}\p{N}]/u.test(part.text)),
  ))
}

/** Symptoms worth offering as "did you mean" for this answer (none when the query named one). */
export function didYouMean(answer: ProcedureSearchAnswer | null | undefined): Array<{ slug: string, name: string }> {
  if (!answer || answer.suggestions.length === 0 || namesKnownSymptom(answer)) return []
  return answer.suggestions
}

/** The highlight that says best why a hit matched, besides its title and symptoms. */
export function contextHighlight(hit: SearchHitDto): SearchHighlight | undefined {
  return hit.highlights.find(h => h.field === 'cause' || h.field === 'step') ?? hit.highlights.find(h => h.field === 'text')
}

export function titleHighlight(hit: SearchHitDto): SearchSnippetPart[] {
  return hit.highlights.find(h => h.field === 'title')?.snippet ?? [{ text: hit.title, match: false }]
}

/** Which of a hit's symptoms the query matched, by name. */
export function matchedSymptomNames(hit: SearchHitDto): Set<string> {
  const names = new Set<string>()
  for (const h of hit.highlights) if (h.field === 'symptom' && h.snippet.some(p => p.match)) names.add(h.snippet.map(p => p.text).join(''))
  return names
}

export function searchProblemText(error: unknown): string {
  const status = (error as { statusCode?: number, status?: number } | null)?.statusCode ?? (error as { status?: number } | null)?.status
  if (status === 503) return 'The search index is still being built. Try again in a moment.'
  if (status === 401) return 'Your session has ended. Sign in again to search.'
  return 'Search did not answer. Check the connection and try again.'
}

/**
 * Search-as-you-type over published procedures. Requests go out `debounceMs` after the last
 * keystroke; a newer request aborts the one in flight, and an answer that arrives for an older
 * text is dropped by its turn number all the same (an abort can lose the race with a response
 * already being parsed). The previous answer stays on screen until the next one is in, so the
 * list does not blink while a junior is still typing.
 */
export function useProcedureSearch(text: MaybeRefOrGetter<string>, options: { limit?: number, debounceMs?: number } = {}) {
  const limit = options.limit ?? 6
  const debounceMs = options.debounceMs ?? 120
  const answer = shallowRef<ProcedureSearchAnswer | null>(null)
  /** The text the current answer belongs to. */
  const answeredFor = ref('')
  const pending = ref(false)
  const problem = ref<string | null>(null)

  let turn = 0
  let timer: ReturnType<typeof setTimeout> | undefined
  let inFlight: AbortController | undefined

  function cancel() {
    if (timer) clearTimeout(timer)
    timer = undefined
    inFlight?.abort()
    inFlight = undefined
  }

  async function run(q: string) {
    const mine = ++turn
    inFlight?.abort()
    const controller = new AbortController()
    inFlight = controller
    pending.value = true
    try {
      const res = await $fetch('/api/search', { query: { q, limit }, signal: controller.signal })
      if (mine !== turn) return
      answer.value = res
      answeredFor.value = q
      problem.value = null
    }
    catch (err) {
      if (mine !== turn || controller.signal.aborted) return
      problem.value = searchProblemText(err)
    }
    finally {
      if (mine === turn) {
        pending.value = false
        inFlight = undefined
      }
    }
  }

  if (import.meta.client) {
    watch(() => toValue(text).trim(), (q) => {
      cancel()
      if (!q) {
        turn++
        answer.value = null
        answeredFor.value = ''
        pending.value = false
        problem.value = null
        return
      }
      pending.value = true
      timer = setTimeout(() => {
        timer = undefined
        void run(q)
      }, debounceMs)
    })
    onScopeDispose(cancel)
  }

  return { answer, answeredFor, pending, problem }
}
