import { LRUCache } from 'lru-cache'
import type { SeriesDto } from '../../../shared/types/captures'
import { decimateMinMax } from '../../../shared/utils/waveform/decimate'
import type { ObjectStore } from '../storage'

/** Parsed samples of a capture: time in seconds, voltage in volts, current in amperes. */
export interface Samples { t: Float64Array, v: Float64Array, i?: Float64Array }

/** Samples as one binary object: a header of counts, then t (f64), v (f32) and i (f32). */
export function encodeSamples(c: Samples): Buffer {
  const n = c.t.length
  const header = Buffer.alloc(8)
  header.writeUInt32LE(n, 0)
  header.writeUInt32LE(c.i ? 1 : 0, 4)
  const parts = [header, Buffer.from(c.t.buffer, c.t.byteOffset, c.t.byteLength), Buffer.from(Float32Array.from(c.v).buffer)]
  if (c.i) parts.push(Buffer.from(Float32Array.from(c.i).buffer))
  return Buffer.concat(parts)
}

export function decodeSamples(buf: Buffer): Samples {
  const n = buf.readUInt32LE(0)
  const hasI = buf.readUInt32LE(4) === 1
  const copy = (offset: number, bytes: number) => buf.buffer.slice(buf.byteOffset + offset, buf.byteOffset + offset + bytes)
  const t = new Float64Array(copy(8, n * 8))
  const v = Float64Array.from(new Float32Array(copy(8 + n * 8, n * 4)))
  const i = hasI ? Float64Array.from(new Float32Array(copy(8 + n * 12, n * 4))) : undefined
  return { t, v, i }
}

/** The stretch [from, to] of a capture, min/max decimated into `buckets` (real detail, not interpolation). */
export function seriesOf(c: Samples, buckets: number, from?: number, to?: number): SeriesDto {
  let lo = 0
  let hi = c.t.length
  if (from !== undefined) while (lo < hi && c.t[lo]! < from) lo++
  if (to !== undefined) while (hi > lo && c.t[hi - 1]! > to) hi--
  const t = c.t.subarray(lo, hi)
  const d = decimateMinMax(t, c.v.subarray(lo, hi), buckets, c.i?.subarray(lo, hi))
  const round = (a: Float64Array, digits: number) => Array.from(a, x => +x.toPrecision(digits))
  return { t: round(d.t, 9), v: round(d.v, 5), ...(d.v2 ? { i: round(d.v2, 5) } : {}), from: t[0] ?? 0, to: t[t.length - 1] ?? 0 }
}

// A few decoded captures stay in memory: zooming asks for several windows in a row. A capture's
// samples never change once stored, so entries leave only when newer ones push them out.
const decoded = new LRUCache<number, Samples>({ max: 4 })

export async function captureSeries(capture: { id: number, samplesKey: string }, store: ObjectStore, q: { from?: number, to?: number, buckets: number }): Promise<SeriesDto> {
  let samples = decoded.get(capture.id)
  if (!samples) {
    const object = await store.get(capture.samplesKey)
    const parts: Buffer[] = []
    for await (const c of object.body) parts.push(c as Buffer)
    samples = decodeSamples(Buffer.concat(parts))
    decoded.set(capture.id, samples)
  }
  return seriesOf(samples, q.buckets, q.from, q.to)
}
