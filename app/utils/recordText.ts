import { OUTCOME_LABELS, type Outcome, type RecordDto } from '#shared/types/records'

// A record's figures and amendments in words, for the record pages, the list and the dashboard.

const EUROS = new Intl.NumberFormat('en-IE', { style: 'currency', currency: 'EUR' })

/** Amounts in euros, as the records store them (the CSV export names its columns in euros too). */
export function formatMoney(x: number | null | undefined): string {
  return typeof x === 'number' && Number.isFinite(x) ? EUROS.format(x) : '—'
}

export function formatMinutes(x: number | null | undefined): string {
  if (typeof x !== 'number' || !Number.isFinite(x)) return '—'
  if (x < 60) return `${x} min`
  const h = Math.floor(x / 60)
  const m = x % 60
  return m ? `${h} h ${m} min` : `${h} h`
}

export const AMENDABLE_FIELD_LABELS: Record<string, string> = {
  confirmedCause: 'Confirmed cause',
  outcome: 'Outcome',
  parts: 'Parts used',
  minutes: 'Time on the job',
  replacementCost: 'Cost of a new unit',
  comeback: 'Came back',
  notes: 'Notes',
  photoIds: 'Bench photos',
}

/** One side of an amendment in words; the server keeps whatever shape the field had. */
export function describeAmendedValue(field: string, value: unknown, record: Pick<RecordDto, 'candidates' | 'confirmedCause'>): string {
  if (value === null || value === undefined || value === '') return '—'
  switch (field) {
    case 'confirmedCause': {
      if (typeof value === 'object' && value && 'label' in value) return String((value as { label: unknown }).label)
      const id = String(value)
      const exact = record.candidates.find(c => c.id === id)?.label ?? (record.confirmedCause?.id === id ? record.confirmedCause.label : undefined)
      if (exact) return exact
      // Older amendments name the procedure by number rather than slug: match on the cause key.
      const key = id.slice(id.indexOf(':') + 1)
      const byKey = record.candidates.filter(c => c.id.endsWith(`:${key}`))
      return byKey.length === 1 ? byKey[0]!.label : id
    }
    case 'outcome':
      return OUTCOME_LABELS[value as Outcome] ?? String(value)
    case 'parts': {
      if (!Array.isArray(value)) return String(value)
      if (!value.length) return 'none'
      return value.map((p: { name?: string, partNumber?: string, cost?: number }) => `${p.name ?? '?'}${p.partNumber ? ` (${p.partNumber})` : ''} ${formatMoney(p.cost ?? 0)}`).join('; ')
    }
    case 'minutes':
      return formatMinutes(Number(value))
    case 'replacementCost':
      return formatMoney(Number(value))
    case 'comeback':
      return value === true ? 'yes' : 'no'
    case 'photoIds':
      return Array.isArray(value) ? `${value.length} ${value.length === 1 ? 'photo' : 'photos'}` : String(value)
    default:
      return typeof value === 'string' ? value : JSON.stringify(value)
  }
}
