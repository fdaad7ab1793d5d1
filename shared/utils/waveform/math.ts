/** Small numeric helpers shared by the stages of the waveform analysis. */

export const DEG = 180 / Math.PI

export function median(values: ArrayLike<number>): number {
  const sorted = Float64Array.from(values).sort()
  const n = sorted.length
  if (n === 0) return Number.NaN
  const mid = n >> 1
  return n % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2
}

export function clamp(x: number, lo: number, hi: number): number {
  return x < lo ? lo : x > hi ? hi : x
}

export function nextPow2(n: number): number {
  let p = 1
  while (p < n) p <<= 1
  return p
}

/**
 * sin and cos of ω(t − t0) sample by sample. On evenly sampled captures it rotates by a fixed
 * step (a fraction of the cost of Math.sin and Math.cos), re-anchored on the time stamps every
 * 256 steps so rounding cannot build up.
 */
export class Phasor {
  s = 0
  c = 1
  private steps = 0
  private readonly t: Float64Array
  private readonly omega: number
  private readonly t0: number
  private readonly even: boolean
  private readonly cosStep: number
  private readonly sinStep: number
  constructor(t: Float64Array, omega: number, t0: number, even: boolean, stride: number) {
    const n = t.length
    const step = (omega * stride * (t[n - 1]! - t[0]!)) / (n - 1)
    this.t = t
    this.omega = omega
    this.t0 = t0
    this.even = even
    this.cosStep = Math.cos(step)
    this.sinStep = Math.sin(step)
  }

  /** Moves to sample k: the next one in stride, or any sample after a reset. */
  advance(k: number): void {
    if (!this.even || (this.steps++ & 255) === 0) {
      const th = this.omega * (this.t[k]! - this.t0)
      this.s = Math.sin(th)
      this.c = Math.cos(th)
      return
    }
    const s = this.s
    this.s = s * this.cosStep + this.c * this.sinStep
    this.c = this.c * this.cosStep - s * this.sinStep
  }
}
