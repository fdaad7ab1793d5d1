import { z } from 'zod'
import type { CutPoint, CutType, HalfCycleDetail, HalfCycleEvent, WaveformAnalysis, WaveformFeatures } from '../utils/waveform/analyse'

export const REFERENCE_KINDS = ['good', 'fault'] as const
export type ReferenceKind = (typeof REFERENCE_KINDS)[number]
export const REFERENCE_KIND_LABELS: Record<ReferenceKind, string> = {
  good: 'Known-good trace',
  fault: 'Fault trace',
}

const columnIndex = z.coerce.number().int().min(0).max(999)

/** The form fields sent beside the file. */
export const CaptureUploadFields = z.object({
  label: z.string().trim().max(160).default(''),
  recordId: z.coerce.number().int().positive().optional(),
  /** The step of the record's procedure the capture was taken for. */
  stepKey: z.string().trim().min(1).max(40).optional(),
  /** The technician's choice of columns, when the file leaves it open (0-based). */
  voltageColumn: columnIndex.optional(),
  currentColumn: z.union([z.literal('none'), columnIndex]).optional(),
}).superRefine((v, ctx) => {
  if (v.stepKey !== undefined && v.recordId === undefined) ctx.addIssue({ code: 'custom', path: ['stepKey'], message: 'A step belongs to a repair record: send recordId with it.' })
  if (v.currentColumn !== undefined && v.voltageColumn === undefined) ctx.addIssue({ code: 'custom', path: ['voltageColumn'], message: 'Choose the voltage column along with the current column.' })
})
export type CaptureUploadFields = z.output<typeof CaptureUploadFields>

export const CUT_TYPES = ['none', 'leading_edge', 'trailing_edge', 'half_missing', 'irregular'] as const satisfies readonly CutType[]

/** Benchlore's names for the kinds of phase cut. */
export const CUT_TYPE_NAMES: Record<CutType, string> = {
  none: 'No phase cut',
  leading_edge: 'Leading edge',
  trailing_edge: 'Trailing edge',
  half_missing: 'One half-cycle wrong',
  irregular: 'Irregular',
}

export const CaptureListQuery = z.object({
  /** Only the captures the caller uploaded. */
  mine: z.enum(['1', 'true', '0', 'false']).transform(v => v === '1' || v === 'true').optional(),
  record: z.coerce.number().int().positive().optional(),
  /** A procedure's slug: captures of its records and its reference signatures. */
  procedure: z.string().trim().min(1).max(100).optional(),
  cut: z.enum(CUT_TYPES).optional(),
  from: z.iso.date().optional(),
  to: z.iso.date().optional(),
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(20),
})
export type CaptureListQuery = z.output<typeof CaptureListQuery>

export const ReferenceBody = z.object({
  procedureSlug: z.string().trim().min(1).max(100),
  stepKey: z.string().trim().max(40).optional(),
  symptom: z.string().trim().max(80).optional(),
  kind: z.enum(REFERENCE_KINDS),
  note: z.string().trim().max(500).default(''),
})
export type ReferenceBody = z.output<typeof ReferenceBody>

export const SeriesQuery = z.object({
  from: z.coerce.number().finite().optional(),
  to: z.coerce.number().finite().optional(),
  buckets: z.coerce.number().int().min(10).max(8000).default(2000),
})

/** How the file was read: what the analysis stands on. */
export interface CaptureFileDto {
  encoding: 'utf-8' | 'utf-16le' | 'utf-16be'
  delimiter: ',' | ';' | '\t'
  decimalComma: boolean
  timeSource: 'column' | 'sample_interval' | 'date_time'
  columns: { time: string | null, voltage: string | null, current: string | null }
  units: { time: string, voltage: string, current: string | null }
  dataRows: number
  /** Data rows left out (over range, empty or unreadable cells), and where. */
  droppedRows: number
  skipped: { overRange: number, empty: number, unreadable: number, ranges: Array<[number, number]>, columns: string[] }
}

/** The answer to an upload: the stored capture's id, what the analysis found, and how the file was read. */
export interface CaptureUploadedDto { id: number, features: WaveformFeatures, file: CaptureFileDto, warnings: string[] }

/** A column the technician may choose, when the file leaves the choice open (422 AMBIGUOUS_COLUMNS). */
export interface CaptureColumnDto {
  index: number
  name: string | null
  unit: string | null
  quantity: 'time' | 'index' | 'voltage' | 'current' | 'other' | 'unknown'
  asVoltage: boolean
  asCurrent: boolean
  sample: string | null
}

/** One capture in a list: what it shows at a glance and where it belongs. */
export interface CaptureListItemDto {
  id: number
  label: string
  createdAt: string
  uploadedBy: { id: number, name: string }
  record: { id: number, procedureTitle: string | null, unitModel: string } | null
  stepKey: string | null
  /** The step's title in the record's pinned revision. */
  stepTitle: string | null
  features: Pick<WaveformFeatures, 'cutType' | 'dead' | 'vrms' | 'frequencyHz' | 'conductionAngleDeg' | 'asymmetry' | 'thd' | 'supplyVrms'>
  /** Half-cycles unlike the others (missing, uncontrolled). */
  events: number
}

/** A plotted series: min/max per bucket (two points per bucket, in time order). */
export interface SeriesDto { t: number[], v: number[], i?: number[], from: number, to: number }

export interface CaptureDto {
  id: number
  label: string
  createdAt: string
  uploadedBy: { id: number, name: string }
  recordId: number | null
  stepKey: string | null
  fileUrl: string
  features: WaveformFeatures
  analysis: {
    sampleRateHz: number
    durationS: number
    frequency: WaveformAnalysis['frequency']
    cut: WaveformAnalysis['cut']
    window: WaveformAnalysis['window']
    harmonics: { cyclesPerWindow: number, windows: number, maxHarmonic: number, voltage: number[], current?: number[] } | null
    cutPoints: CutPoint[]
    halfCycles: HalfCycleDetail[]
    /** Single half-cycles unlike the rest (not every stored capture has them). */
    events?: HalfCycleEvent[]
    eventsTotal?: number
    /** How the file was read (not every stored capture has it). */
    file?: CaptureFileDto
    warnings: string[]
  }
  series: SeriesDto
  references: ReferenceDto[]
}

export interface ReferenceDto {
  id: number
  captureId: number
  kind: ReferenceKind
  note: string
  procedure: { slug: string, title: string }
  stepKey: string | null
  symptom: string | null
  createdBy: { id: number, name: string }
}

export interface SignatureMatchDto {
  reference: ReferenceDto
  distance: number
  similarity: number
  features: Pick<WaveformFeatures, 'cutType' | 'vrms' | 'conductionAngleDeg' | 'asymmetry' | 'thd'>
}

/** The references of one procedure a capture resembles, nearest first. */
export interface MatchGroupDto {
  procedure: { slug: string, title: string }
  /** The best similarity among them, which orders the groups. */
  similarity: number
  matches: SignatureMatchDto[]
}
