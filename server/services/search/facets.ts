/**
 * Narrowing a result set by device type, symptom and hazard, and counting how many results each
 * value would leave. Values are coded as small integers when a document is indexed, so counting
 * is array arithmetic.
 */
import type { SearchFacetValue, SearchFacets } from './types'

export type FacetKind = 'device' | 'symptom' | 'hazard'

/** A document's facet values, as codes. */
export type FacetCoded = { device: number, symptoms: readonly number[], hazards: readonly number[] }

export type FacetFilters = { deviceType?: string, symptom?: string, hazard?: string }

/** Display names of facet values (slugs otherwise). */
export type FacetLabels = Record<keyof SearchFacets, (value: string) => string>

export const HAZARD_LABELS: Readonly<Record<string, string>> = {
  mains: 'Mains voltage',
  stored_energy: 'Stored energy',
  heat: 'Heat',
  none: 'No special hazard',
}

/** Codes are only ever added: a value no document has any more just counts 0. */
export class FacetCodes {
  protected readonly codes: Record<FacetKind, Map<string, number>> = { device: new Map(), symptom: new Map(), hazard: new Map() }
  protected readonly values: Record<FacetKind, string[]> = { device: [], symptom: [], hazard: [] }

  /** The code of a value, assigned on first sight. */
  code(kind: FacetKind, value: string): number {
    let c = this.codes[kind].get(value)
    if (c === undefined) {
      c = this.values[kind].length
      this.codes[kind].set(value, c)
      this.values[kind].push(value)
    }
    return c
  }

  /**
   * The items passing every filter, and the facets of the set: each facet counted with the
   * OTHER filters applied (the device-type counts ignore the device-type filter but honour the
   * symptom and hazard ones, and so on), so a count says what choosing that value would give.
   * One pass over the items.
   *
   * @example codes.narrow(matches, m => m.rec, { hazard: 'mains' }, labels) // { passing, facets }
   */
  narrow<T>(items: readonly T[], coded: (item: T) => FacetCoded, filters: FacetFilters, labels: FacetLabels): { passing: T[], facets: SearchFacets } {
    // -1: no filter; a value no document has gets a code nothing matches.
    const filterCode = (kind: FacetKind, value: string | undefined): number => (value === undefined ? -1 : (this.codes[kind].get(value) ?? -2))
    const fDevice = filterCode('device', filters.deviceType)
    const fSymptom = filterCode('symptom', filters.symptom)
    const fHazard = filterCode('hazard', filters.hazard)
    const deviceCounts = new Int32Array(this.values.device.length)
    const symptomCounts = new Int32Array(this.values.symptom.length)
    const hazardCounts = new Int32Array(this.values.hazard.length)
    const passing: T[] = []
    for (const item of items) {
      const r = coded(item)
      const okDevice = fDevice === -1 || r.device === fDevice
      const okSymptom = fSymptom === -1 || r.symptoms.includes(fSymptom)
      const okHazard = fHazard === -1 || r.hazards.includes(fHazard)
      if (okSymptom && okHazard) deviceCounts[r.device]!++
      if (okDevice && okHazard) for (const x of r.symptoms) symptomCounts[x]!++
      if (okDevice && okSymptom) for (const x of r.hazards) hazardCounts[x]!++
      if (okDevice && okSymptom && okHazard) passing.push(item)
    }
    return {
      passing,
      facets: {
        deviceType: this.facet('device', deviceCounts, labels.deviceType),
        symptom: this.facet('symptom', symptomCounts, labels.symptom),
        hazard: this.facet('hazard', hazardCounts, labels.hazard),
      },
    }
  }

  protected facet(kind: FacetKind, counts: Int32Array, label: (value: string) => string): SearchFacetValue[] {
    const out: SearchFacetValue[] = []
    counts.forEach((count, code) => {
      if (count > 0) {
        const value = this.values[kind][code]!
        out.push({ value, count, label: label(value) })
      }
    })
    return out.sort((a, b) => b.count - a.count || a.label.localeCompare(b.label))
  }
}
