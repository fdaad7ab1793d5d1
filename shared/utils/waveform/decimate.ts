/**
 * Min/max decimation for plotting: the time axis is cut into equal buckets (one per pixel
 * column) and each bucket keeps its lowest and highest sample, in the order they occurred. A
 * 2 M-sample capture then draws from 2 points per pixel and still shows every spike and every
 * phase-cut edge, which plain subsampling would drop.
 */

export interface DecimatedSeries {
  t: Float64Array
  v: Float64Array
  /** Second channel (e.g. current), sharing `t`. */
  v2?: Float64Array
}

export function decimateMinMax(t: Float64Array, v: Float64Array, buckets: number, v2?: Float64Array): DecimatedSeries {
  const n = t.length
  if (v.length !== n || (v2 !== undefined && v2.length !== n)) throw new RangeError('channels must have as many samples as the time axis')
  const b = Math.max(1, Math.floor(buckets))
  if (n <= 2 * b) return v2 !== undefined ? { t: t.slice(), v: v.slice(), v2: v2.slice() } : { t: t.slice(), v: v.slice() }

  const outT = new Float64Array(2 * b)
  const outV = new Float64Array(2 * b)
  const outV2 = v2 !== undefined ? new Float64Array(2 * b) : undefined
  let m = 0
  const t0 = t[0]!
  const width = (t[n - 1]! - t0) / b
  let k = 0
  for (let bucket = 0; bucket < b && k < n; bucket++) {
    const end = bucket === b - 1 ? Infinity : t0 + (bucket + 1) * width
    const first = k
    let lo = k
    let hi = k
    let lo2 = k
    let hi2 = k
    for (; k < n && t[k]! < end; k++) {
      const x = v[k]!
      if (x < v[lo]!) lo = k
      if (x > v[hi]!) hi = k
      if (v2 !== undefined) {
        const y = v2[k]!
        if (y < v2[lo2]!) lo2 = k
        if (y > v2[hi2]!) hi2 = k
      }
    }
    const last = k - 1
    if (last < first) continue
    if (last === first) {
      outT[m] = t[first]!
      outV[m] = v[first]!
      if (outV2 !== undefined && v2 !== undefined) outV2[m] = v2[first]!
      m++
      continue
    }
    // A flat bucket still spans its samples, so the second channel keeps both its extremes.
    let a = Math.min(lo, hi)
    let z = Math.max(lo, hi)
    if (a === z) {
      a = first
      z = last
    }
    outT[m] = t[a]!
    outT[m + 1] = t[z]!
    outV[m] = v[a]!
    outV[m + 1] = v[z]!
    if (outV2 !== undefined && v2 !== undefined) {
      // The second channel's extremes take the first channel's two time stamps, in their own
      // order of occurrence: both lie in the same bucket, less than a pixel apart.
      outV2[m] = v2[Math.min(lo2, hi2)]!
      outV2[m + 1] = v2[Math.max(lo2, hi2)]!
    }
    m += 2
  }
  const result: DecimatedSeries = { t: outT.slice(0, m), v: outV.slice(0, m) }
  if (outV2 !== undefined) result.v2 = outV2.slice(0, m)
  return result
}
