import { z } from 'zod'
import type { CutPoint, HalfCycleDetail, WaveformAnalysis, WaveformFeatures } from '../utils/waveform/analyse'

export const REFERENCE_KINDS = ['good', 'fault'] as const
export type ReferenceKind = (typeof REFERENCE_KINDS)[number]
export const REFERENCE_KIND_LABELS: Record<ReferenceKind, string> = {
  good: 'What a good unit looks like',
  fault: 'What this fault looks like',
}

export const CaptureUploadFields = z.object({
  label: z.string().trim().max(160).default(''),
  recordId: z.coerce.number().int().positive().optional(),
})

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

/** The answer to an upload: the stored capture's id and what the analysis found. */
export interface CaptureUploadedDto { id: number, features: WaveformFeatures }

/** A plotted series: min/max per bucket (two points per bucket, in time order). */
export interface SeriesDto { t: number[], v: number[], i?: number[], from: number, to: number }

export interface CaptureDto {
  id: number
  label: string
  createdAt: string
  uploadedBy: { id: number, name: string }
  recordId: number | null
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
