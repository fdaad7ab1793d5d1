/**
 * The fields a procedure is indexed under, how much each weighs, and how their texts are read
 * out of a `SearchDocument`.
 */
import { rawTokens, type TermAnalyser } from './analysis'
import type { FieldReader } from './term-index'
import type { SearchDocument, SymptomVocabularyEntry } from './types'

export const FIELDS = ['symptomKey', 'symptoms', 'synonyms', 'title', 'deviceType', 'causes', 'stepTitles', 'text'] as const
export type IndexField = (typeof FIELDS)[number]

/** Symptom names and synonyms weigh most, then title, device type, causes, step titles, text. */
export const FIELD_BOOSTS: Readonly<Record<IndexField, number>> = {
  symptomKey: 4,
  symptoms: 5,
  synonyms: 4,
  title: 3,
  deviceType: 2,
  causes: 1.5,
  stepTitles: 1.25,
  text: 1,
}

/** Fields of words (the symptom key field holds slugs). */
export const WORD_FIELDS: readonly IndexField[] = FIELDS.filter(f => f !== 'symptomKey')
/** Where a word of two or three letters still being typed is completed: not in body text. */
export const SHORT_PREFIX_FIELDS: readonly IndexField[] = WORD_FIELDS.filter(f => f !== 'text')
export const BODY_FIELD: IndexField = 'text'

/**
 * In long text a term counts at most this many times: BM25's term-frequency factor is nearly
 * saturated by then (k = 1.2: tf 3 gives 78 % of the limit), and every occurrence indexed is a
 * posting update, the bulk of build time.
 */
export const MAX_TEXT_TERM_FREQUENCY = 3

/** How each field is read: words through the analyser, symptom keys as they are. */
export function fieldReaders(analyser: TermAnalyser): FieldReader[] {
  const term = (token: string): string | null => analyser.term(token)
  return FIELDS.map((name): FieldReader => {
    if (name === 'symptomKey') return { name, boost: FIELD_BOOSTS[name], tokens: slugTokens, term: slug => slug, cap: Infinity }
    return { name, boost: FIELD_BOOSTS[name], tokens: rawTokens, term, cap: name === BODY_FIELD ? MAX_TEXT_TERM_FREQUENCY : Infinity }
  })
}

function slugTokens(text: string): string[] {
  return text.split(' ').filter(Boolean)
}

/**
 * The text of each field (in FIELDS order). Symptom names are indexed both as the document
 * states them and as the vocabulary does now; the synonyms come from the vocabulary, so a
 * change there re-indexes the symptom's documents.
 */
export function fieldTexts(doc: SearchDocument, symptoms: ReadonlyMap<string, SymptomVocabularyEntry>): string[] {
  return FIELDS.map((field) => {
    switch (field) {
      case 'symptomKey':
        return doc.symptoms.map(s => s.slug).join(' ')
      case 'symptoms':
        return doc.symptoms
          .flatMap((s) => {
            const vocabName = symptoms.get(s.slug)?.name
            return vocabName && vocabName !== s.name ? [s.name, vocabName] : [s.name]
          })
          .join('\n')
      case 'synonyms':
        return doc.symptoms.flatMap(s => symptoms.get(s.slug)?.synonyms ?? []).join('\n')
      case 'title':
        return doc.title
      case 'deviceType':
        return doc.deviceType.name
      case 'causes':
        return doc.causes.map(c => c.name).join('\n')
      case 'stepTitles':
        return doc.stepTitles.join('\n')
      case 'text':
        return doc.text
    }
  })
}
