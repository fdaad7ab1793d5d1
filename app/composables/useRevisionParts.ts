import { computed } from 'vue'
import { CAUTION_HAZARDS } from '#shared/types/hazards'
import type { RevisionContent } from '#shared/types/procedure'

/** The parts of a revision a reading view lists, each present even in an incomplete draft. */
export function useRevisionParts(content: () => RevisionContent) {
  const c = computed(content)
  const steps = computed(() => c.value.steps ?? [])
  const causes = computed(() => c.value.causes ?? [])
  const parts = computed(() => c.value.parts ?? [])
  const hazards = computed(() => c.value.hazards ?? [])
  const cautioned = computed(() => hazards.value.some(h => CAUTION_HAZARDS.includes(h)))
  const causeNames = computed(() => Object.fromEntries(causes.value.map(x => [x.key, x.name])))
  return { c, steps, causes, parts, hazards, cautioned, causeNames }
}
