/**
 * Finding symptoms of the vocabulary by what an author types in the editor's symptom picker,
 * with the typo tolerance of search ("flikker" is Flickers, "doesnt dim" is Does not dim).
 */
import { LRUCache } from 'lru-cache'
import type { SymptomDto } from '../../../shared/types/procedure-api'
import type { SymptomMatchDto } from '../../../shared/types/search'
import { normaliseWord, parseQuery } from './query'
import { SymptomPhrases } from './symptom-phrases'

export const SYMPTOM_MATCH_LIMIT = 8

/**
 * Phrase indexes by vocabulary, keyed by its whole content: a change to any symptom makes a
 * new key, so nothing needs emptying; entries of old vocabularies fall out by count.
 */
const phraseIndexes = new LRUCache<string, SymptomPhrases>({ max: 4 })

function phrasesOf(symptoms: readonly SymptomDto[]): SymptomPhrases {
  const key = JSON.stringify(symptoms.map(s => [s.slug, s.name, s.synonyms]))
  let phrases = phraseIndexes.get(key)
  if (!phrases) phraseIndexes.set(key, (phrases = new SymptomPhrases(symptoms)))
  return phrases
}

const fold = (s: string): string => normaliseWord(s).trim()

/**
 * The symptoms (merged ones left out) whose name or a synonym has every typed word, best first,
 * each with the synonym that matched when its name did not; then, for a fragment too short to
 * be a word ("fl", "ead"), the ones whose name, slug or a synonym contains it.
 *
 * @example matchSymptoms(symptoms, 'flikker') // [{ symptom: Flickers on one half-cycle, via: null }, …]
 */
export function matchSymptoms(all: readonly SymptomDto[], q: string, limit = SYMPTOM_MATCH_LIMIT): SymptomMatchDto[] {
  const symptoms = all.filter(s => s.status !== 'merged')
  const bySlug = new Map(symptoms.map(s => [s.slug, s]))
  const out: SymptomMatchDto[] = []
  for (const m of phrasesOf(symptoms).match(parseQuery(q))) {
    const symptom = bySlug.get(m.slug)
    if (symptom) out.push({ symptom, via: m.via })
  }
  const text = fold(q)
  if (text) {
    const listed = new Set(out.map(m => m.symptom.slug))
    for (const s of symptoms) {
      if (listed.has(s.slug)) continue
      if (fold(s.name).includes(text) || s.slug.includes(text)) out.push({ symptom: s, via: null })
      else {
        const synonym = s.synonyms.find(syn => fold(syn).includes(text))
        if (synonym) out.push({ symptom: s, via: synonym })
      }
    }
  }
  return out.slice(0, limit)
}
