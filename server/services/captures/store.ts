import { createHash, randomUUID } from 'node:crypto'
import { Readable } from 'node:stream'
import { createError } from 'h3'
import type { ReferenceDto, SeriesDto, SignatureMatchDto } from '../../../shared/types/captures'
import { decimateMinMax } from '../../../shared/utils/waveform/decimate'
import { analyseWaveform, WaveformError, type WaveformAnalysis } from '../../../shared/utils/waveform/analyse'
import { rankSignatures } from '../../../shared/utils/waveform/signature'
import { Attachment, Capture, Procedure, RepairRecord, Revision, SignatureReference, User, inTransaction } from '../../db'
import type { ObjectStore } from '../storage'
import { ObjectStoreUnavailable } from '../storage'
import { CaptureFormatError, parseCaptureCsv, type ParsedCapture } from './parse'

export const MAX_CAPTURE_BYTES = 50 * 1024 * 1024
const OVERVIEW_BUCKETS = 2000
const DETAIL_LIMIT = { halfCycles: 400, cutPoints: 400 }

/** Samples as one binary object: a header of counts, then t (f64), v (f32) and i (f32). */
export function encodeSamples(c: { t: Float64Array, v: Float64Array, i?: Float64Array }): Buffer {
  const n = c.t.length
  const header = Buffer.alloc(8)
  header.writeUInt32LE(n, 0)
  header.writeUInt32LE(c.i ? 1 : 0, 4)
  const parts = [header, Buffer.from(c.t.buffer, c.t.byteOffset, c.t.byteLength), Buffer.from(Float32Array.from(c.v).buffer)]
  if (c.i) parts.push(Buffer.from(Float32Array.from(c.i).buffer))
  return Buffer.concat(parts)
}

export function decodeSamples(buf: Buffer): { t: Float64Array, v: Float64Array, i?: Float64Array } {
  const n = buf.readUInt32LE(0)
  const hasI = buf.readUInt32LE(4) === 1
  const copy = (offset: number, bytes: number) => buf.buffer.slice(buf.byteOffset + offset, buf.byteOffset + offset + bytes)
  const t = new Float64Array(copy(8, n * 8))
  const v = Float64Array.from(new Float32Array(copy(8 + n * 8, n * 4)))
  const i = hasI ? Float64Array.from(new Float32Array(copy(8 + n * 12, n * 4))) : undefined
  return { t, v, i }
}

function seriesOf(c: { t: Float64Array, v: Float64Array, i?: Float64Array }, buckets: number, from?: number, to?: number): SeriesDto {
  let lo = 0
  let hi = c.t.length
  if (from !== undefined) while (lo < hi && c.t[lo]! < from) lo++
  if (to !== undefined) while (hi > lo && c.t[hi - 1]! > to) hi--
  const t = c.t.subarray(lo, hi)
  const d = decimateMinMax(t, c.v.subarray(lo, hi), buckets, c.i?.subarray(lo, hi))
  const round = (a: Float64Array, digits: number) => Array.from(a, x => +x.toPrecision(digits))
  return { t: round(d.t, 9), v: round(d.v, 5), ...(d.v2 ? { i: round(d.v2, 5) } : {}), from: t[0] ?? 0, to: t[t.length - 1] ?? 0 }
}

function analysisSummary(a: WaveformAnalysis) {
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

/** Parses and analyses an export; a file Benchlore cannot use is a 422 naming the problem. */
export async function readCapture(data: Buffer): Promise<{ parsed: ParsedCapture, analysis: WaveformAnalysis }> {
  let parsed: ParsedCapture
  try {
    parsed = await parseCaptureCsv(Readable.from(chunks(data)))
  }
  catch (error) {
    if (error instanceof CaptureFormatError) throw createError({ statusCode: 422, message: error.message, data: { code: error.code, row: error.row ?? null, fields: { file: error.message } } })
    throw error
  }
  try {
    return { parsed, analysis: analyseWaveform(parsed) }
  }
  catch (error) {
    if (error instanceof WaveformError) throw createError({ statusCode: 422, message: error.message, data: { code: error.code, fields: { file: error.message } } })
    throw error
  }
}

function* chunks(data: Buffer, size = 1 << 20) {
  for (let i = 0; i < data.length; i += size) yield data.subarray(i, i + size)
}

/** Stores raw file and samples, then the rows; a failed store leaves no row behind. */
export async function storeCapture(file: { data: Buffer }, opts: { label: string, recordId?: number }, actor: User, store: ObjectStore) {
  if (!file.data.length) throw createError({ statusCode: 422, message: 'The file is empty.', data: { code: 'EMPTY_FILE', fields: { file: 'is empty' } } })
  if (file.data.length > MAX_CAPTURE_BYTES) throw createError({ statusCode: 413, message: 'The capture is larger than 50 MB.', data: { fields: { file: 'too large' } } })
  if (opts.recordId && !(await RepairRecord.count({ where: { id: opts.recordId } }))) throw createError({ statusCode: 422, message: 'No such repair record.', data: { fields: { recordId: 'unknown record' } } })
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

// A few decoded captures stay in memory: zooming asks for several windows in a row.
const cache = new Map<number, { t: Float64Array, v: Float64Array, i?: Float64Array }>()
export async function captureSeries(capture: Capture, store: ObjectStore, q: { from?: number, to?: number, buckets: number }): Promise<SeriesDto> {
  let samples = cache.get(capture.id)
  if (!samples) {
    const object = await store.get(capture.samplesKey)
    const parts: Buffer[] = []
    for await (const c of object.body) parts.push(c as Buffer)
    samples = decodeSamples(Buffer.concat(parts))
    cache.set(capture.id, samples)
    if (cache.size > 4) cache.delete(cache.keys().next().value!)
  }
  return seriesOf(samples, q.buckets, q.from, q.to)
}

async function referenceDtos(refs: SignatureReference[]): Promise<ReferenceDto[]> {
  const procs = await Procedure.findAll({ where: { id: [...new Set(refs.map(r => r.procedureId))] } })
  const revs = await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => !!x) } })
  const people = new Map((await User.findAll({ where: { id: refs.map(r => r.createdById) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  return refs.map((r) => {
    const p = procs.find(x => x.id === r.procedureId)
    const title = revs.find(x => x.procedureId === r.procedureId)?.content.title ?? p?.slug ?? ''
    return { id: r.id, captureId: r.captureId, kind: r.kind, note: r.note, procedure: { slug: p?.slug ?? '', title }, stepKey: r.stepKey, symptom: r.symptom, createdBy: people.get(r.createdById) ?? { id: r.createdById, name: 'Unknown' } }
  })
}

export async function captureDto(c: Capture) {
  const [who, refs] = await Promise.all([
    User.findByPk(c.uploadedById, { attributes: ['id', 'name'] }),
    SignatureReference.findAll({ where: { captureId: c.id } }),
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
    references: await referenceDtos(refs),
  }
}

export async function findCapture(id: number) {
  const c = await Capture.findByPk(id)
  if (!c) throw createError({ statusCode: 404, message: 'No such capture.' })
  return c
}

export async function addReference(captureId: number, input: { procedureSlug: string, stepKey?: string, symptom?: string, kind: 'good' | 'fault', note: string }, actor: User) {
  const capture = await findCapture(captureId)
  const proc = await Procedure.findOne({ where: { slug: input.procedureSlug } })
  const rev = proc?.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId) : null
  if (!proc || !rev) throw createError({ statusCode: 422, message: `"${input.procedureSlug}" is not a live procedure.`, data: { fields: { procedureSlug: 'not a live procedure' } } })
  if (input.stepKey && !rev.content.steps.some(s => s.key === input.stepKey)) throw createError({ statusCode: 422, message: `The procedure has no step "${input.stepKey}".`, data: { fields: { stepKey: 'no such step' } } })
  if (input.symptom && !rev.content.symptoms.includes(input.symptom)) throw createError({ statusCode: 422, message: `The procedure does not list the symptom "${input.symptom}".`, data: { fields: { symptom: 'not a symptom of this procedure' } } })
  const ref = await SignatureReference.create({ captureId: capture.id, procedureId: proc.id, stepKey: input.stepKey ?? null, symptom: input.symptom ?? null, kind: input.kind, note: input.note, createdById: actor.id })
  return (await referenceDtos([ref]))[0]!
}

export async function listReferences(procedureSlug: string) {
  const proc = await Procedure.findOne({ where: { slug: procedureSlug } })
  if (!proc) throw createError({ statusCode: 404, message: 'No such procedure.' })
  return await referenceDtos(await SignatureReference.findAll({ where: { procedureId: proc.id }, order: [['id', 'ASC']] }))
}

/** Reference signatures of live procedures ranked by distance to this capture (shared/utils/waveform/signature.ts). */
export async function matchCapture(capture: Capture): Promise<SignatureMatchDto[]> {
  const refs = await SignatureReference.findAll({
    include: [{ model: Procedure, as: 'procedure', where: { status: 'active' }, required: true, attributes: ['id'] }],
  })
  const others = refs.filter(r => r.captureId !== capture.id)
  const captures = new Map((await Capture.findAll({ where: { id: [...new Set(others.map(r => r.captureId))] }, attributes: ['id', 'features'] })).map(c => [c.id, c.features]))
  const ranked = rankSignatures(capture.features, others.map(r => ({ id: r.id, features: captures.get(r.captureId)! })).filter(r => r.features))
  const dtos = new Map((await referenceDtos(others)).map(d => [d.id, d]))
  return ranked.slice(0, 20).map((m) => {
    const f = captures.get(dtos.get(m.id)!.captureId)!
    return { reference: dtos.get(m.id)!, distance: m.distance, similarity: m.similarity, features: { cutType: f.cutType, vrms: f.vrms, conductionAngleDeg: f.conductionAngleDeg, asymmetry: f.asymmetry, thd: f.thd } }
  })
}
