import { createHash, randomUUID } from 'node:crypto'
import { Readable } from 'node:stream'
import type { CaptureDto } from '../../../shared/types/captures'
import { analyseWaveform, WaveformError, type WaveformAnalysis } from '../../../shared/utils/waveform/analyse'
import { Attachment, Capture, RepairRecord, User, inTransaction } from '../../db'
import { invalid, notFound, tooLarge } from '../errors'
import type { ObjectStore } from '../storage'
import { ObjectStoreUnavailable } from '../storage'
import { CaptureFormatError, parseCaptureCsv, type ParsedCapture } from './parse'
import { referencesOfCapture } from './references'
import { encodeSamples, seriesOf } from './samples'

export const MAX_CAPTURE_BYTES = 50 * 1024 * 1024
const OVERVIEW_BUCKETS = 2000
const DETAIL_LIMIT = { halfCycles: 400, cutPoints: 400 }

function analysisSummary(a: WaveformAnalysis): CaptureDto['analysis'] {
  return {
    sampleRateHz: a.sampleRateHz,
    durationS: a.durationS,
    frequency: a.frequency,
    cut: a.cut,
    window: a.window,
    harmonics: a.harmonics
      ? { cyclesPerWindow: a.harmonics.cyclesPerWindow, windows: a.harmonics.windows, maxHarmonic: a.harmonics.maxHarmonic, voltage: a.harmonics.voltage.amplitudes, ...(a.harmonics.current ? { current: a.harmonics.current.amplitudes } : {}) }
      : null,
    cutPoints: a.cutPoints.slice(0, DETAIL_LIMIT.cutPoints),
    halfCycles: a.halfCycles.slice(0, DETAIL_LIMIT.halfCycles),
    warnings: a.warnings,
  }
}

function* chunks(data: Buffer, size = 1 << 20) {
  for (let i = 0; i < data.length; i += size) yield data.subarray(i, i + size)
}

/** Parses and analyses an export; a file Benchlore cannot use is refused with the problem named. */
export async function readCapture(data: Buffer): Promise<{ parsed: ParsedCapture, analysis: WaveformAnalysis }> {
  let parsed: ParsedCapture
  try {
    parsed = await parseCaptureCsv(Readable.from(chunks(data)))
  }
  catch (error) {
    if (error instanceof CaptureFormatError) throw invalid(error.message, { file: error.message }, { code: error.code, row: error.row ?? null })
    throw error
  }
  try {
    return { parsed, analysis: analyseWaveform(parsed) }
  }
  catch (error) {
    if (error instanceof WaveformError) throw invalid(error.message, { file: error.message }, { code: error.code })
    throw error
  }
}

/** Stores raw file and samples, then the rows; a failed store leaves no row behind. */
export async function storeCapture(file: { data: Buffer }, opts: { label: string, recordId?: number }, actor: User, store: ObjectStore) {
  if (!file.data.length) throw invalid('The file is empty.', { file: 'is empty' }, { code: 'EMPTY_FILE' })
  if (file.data.length > MAX_CAPTURE_BYTES) throw tooLarge('The capture is larger than 50 MB.', { file: 'too large' })
  if (opts.recordId && !(await RepairRecord.count({ where: { id: opts.recordId } }))) throw invalid('No such repair record.', { recordId: 'unknown record' })
  const { parsed, analysis } = await readCapture(file.data)
  const id = randomUUID()
  const rawKey = `captures/${id}.csv`
  const samplesKey = `captures/${id}.samples`
  try {
    await store.put(rawKey, file.data, 'text/csv')
    await store.put(samplesKey, encodeSamples(parsed), 'application/octet-stream')
  }
  catch (error) {
    await Promise.all([store.delete(rawKey), store.delete(samplesKey)])
    throw error instanceof ObjectStoreUnavailable ? error : new ObjectStoreUnavailable(String(error))
  }
  try {
    return await inTransaction(async (transaction) => {
      const attachment = await Attachment.create({ objectKey: rawKey, thumbnailKey: null, kind: 'capture', mime: 'text/csv', bytes: file.data.length, width: null, height: null, sha256: createHash('sha256').update(file.data).digest('hex'), uploadedById: actor.id }, { transaction })
      return await Capture.create({
        attachmentId: attachment.id, samplesKey, label: opts.label, recordId: opts.recordId ?? null, uploadedById: actor.id,
        features: analysis.features, analysis: analysisSummary(analysis), overview: seriesOf(parsed, OVERVIEW_BUCKETS),
      }, { transaction })
    })
  }
  catch (error) {
    await Promise.all([store.delete(rawKey), store.delete(samplesKey)])
    throw error
  }
}

export async function captureDto(c: Capture): Promise<CaptureDto> {
  const [who, references] = await Promise.all([
    User.findByPk(c.uploadedById, { attributes: ['id', 'name'] }),
    referencesOfCapture(c.id),
  ])
  return {
    id: c.id,
    label: c.label,
    createdAt: c.createdAt.toISOString(),
    uploadedBy: { id: c.uploadedById, name: who?.name ?? 'Unknown' },
    recordId: c.recordId,
    fileUrl: `/api/files/${c.attachmentId}`,
    features: c.features,
    analysis: c.analysis,
    series: c.overview,
    references,
  }
}

export async function findCapture(id: number) {
  const c = await Capture.findByPk(id)
  if (!c) throw notFound('capture')
  return c
}
