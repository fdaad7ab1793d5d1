import { createHash, randomUUID } from 'node:crypto'
import { Readable } from 'node:stream'
import type { CaptureDto, CaptureFileDto, CaptureUploadFields } from '../../../shared/types/captures'
import { analyseWaveform, WaveformError, type WaveformAnalysis } from '../../../shared/utils/waveform/analyse'
import { Attachment, Capture, Revision, User, inTransaction } from '../../db'
import { invalid, notFound, tooLarge } from '../errors'
import { recordToAttachTo } from '../records/links'
import type { ObjectStore } from '../storage'
import { ObjectStoreUnavailable } from '../storage'
import { CaptureFormatError, describeSkipped, parseCaptureCsv, type CaptureMeta, type ColumnChoice, type ParsedCapture } from './parse'
import { referencesOfCapture } from './references'
import { encodeSamples, seriesOf } from './samples'

export const MAX_CAPTURE_BYTES = 50 * 1024 * 1024
const OVERVIEW_BUCKETS = 2000
const DETAIL_LIMIT = { halfCycles: 400, cutPoints: 400, events: 200 }

function fileSummary(meta: CaptureMeta): CaptureFileDto {
  const { skipped } = meta
  return {
    encoding: meta.encoding,
    delimiter: meta.delimiter,
    decimalComma: meta.decimalComma,
    timeSource: meta.timeSource,
    columns: { time: meta.columns.time.name, voltage: meta.columns.voltage.name, current: meta.columns.current?.name ?? null },
    units: { time: meta.units.time, voltage: meta.units.voltage, current: meta.units.current ?? null },
    dataRows: meta.dataRows,
    droppedRows: meta.droppedRows,
    skipped: { overRange: skipped.overRange, empty: skipped.empty, unreadable: skipped.unreadable, ranges: skipped.ranges, columns: skipped.columns },
  }
}

/** The analysis' warnings, after what the file itself left out. */
function warningsOf(a: WaveformAnalysis, meta: CaptureMeta): string[] {
  if (meta.droppedRows === 0) return a.warnings
  return [`${describeSkipped(meta.skipped, meta.dataRows)}: the figures leave those rows out`, ...a.warnings]
}

function analysisSummary(a: WaveformAnalysis, meta: CaptureMeta): CaptureDto['analysis'] {
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
    events: a.events.slice(0, DETAIL_LIMIT.events),
    eventsTotal: a.eventsTotal,
    file: fileSummary(meta),
    warnings: warningsOf(a, meta),
  }
}

/** A refusal of the file, naming the field to change: the file, or a column choice. */
function formatRefusal(error: CaptureFormatError) {
  const fields: Record<string, string> = { file: error.message }
  if (error.field) fields[error.field] = error.message
  if (error.code === 'AMBIGUOUS_COLUMNS') fields.voltageColumn = 'choose the column of the voltage at the load'
  return invalid(error.message, fields, { code: error.code, row: error.row ?? null, ...(error.columns ? { columns: error.columns } : {}) })
}

function* chunks(data: Buffer, size = 1 << 20) {
  for (let i = 0; i < data.length; i += size) yield data.subarray(i, i + size)
}

/** Parses and analyses an export; a file Benchlore cannot use is refused with the problem named. */
export async function readCapture(data: Buffer, columns?: ColumnChoice): Promise<{ parsed: ParsedCapture, analysis: WaveformAnalysis }> {
  let parsed: ParsedCapture
  try {
    parsed = await parseCaptureCsv(Readable.from(chunks(data)), columns ? { columns } : {})
  }
  catch (error) {
    if (error instanceof CaptureFormatError) throw formatRefusal(error)
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

/**
 * Who may file a capture with a record, and for which step: the record's technician or an
 * editor, while the record is in progress; the step must be one of its pinned revision's.
 */
async function checkAttachment(recordId: number, stepKey: string | undefined, actor: User): Promise<void> {
  const record = await recordToAttachTo(recordId, actor)
  if (stepKey === undefined) return
  const revision = record.revisionId ? await Revision.findByPk(record.revisionId, { attributes: ['id', 'content'] }) : null
  if (!revision?.content.steps.some(s => s.key === stepKey)) {
    throw invalid(`The record's procedure has no step "${stepKey}".`, { stepKey: 'not a step of the record\'s procedure' })
  }
}

function columnChoice(fields: CaptureUploadFields): ColumnChoice | undefined {
  if (fields.voltageColumn === undefined) return undefined
  return { voltage: fields.voltageColumn, current: fields.currentColumn === undefined || fields.currentColumn === 'none' ? null : fields.currentColumn }
}

/** Stores raw file and samples, then the rows; a refused or failed store leaves nothing behind. */
export async function storeCapture(file: { data: Buffer }, fields: CaptureUploadFields, actor: User, store: ObjectStore) {
  if (!file.data.length) throw invalid('The file is empty: export the capture again.', { file: 'is empty' }, { code: 'EMPTY_FILE' })
  if (file.data.length > MAX_CAPTURE_BYTES) throw tooLarge('The capture is larger than 50 MB.', { file: 'too large' })
  if (fields.recordId !== undefined) await checkAttachment(fields.recordId, fields.stepKey, actor)
  const { parsed, analysis } = await readCapture(file.data, columnChoice(fields))
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
        attachmentId: attachment.id, samplesKey, label: fields.label, recordId: fields.recordId ?? null, stepKey: fields.stepKey ?? null, uploadedById: actor.id,
        cutType: analysis.features.cutType, features: analysis.features, analysis: analysisSummary(analysis, parsed.meta), overview: seriesOf(parsed, OVERVIEW_BUCKETS),
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
    stepKey: c.stepKey,
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
