import type uPlot from 'uplot'
import type { CutPoint, HalfCycleDetail } from '#shared/utils/waveform/analyse'
import { palette } from '~/utils/palette'

// Painting of the waveform plot's own layers on uPlot's canvas: the two half-cycle tints, the
// zero line, hatching of missing half-cycles and the switching markers. Pure functions of the
// chart's scales and the analysis, so the plot component only says when to paint.

export const WAVEFORM_COLOURS = {
  trace: palette.ink.DEFAULT,
  positive: 'rgba(13, 92, 104, 0.24)', // accent
  negative: 'rgba(138, 59, 18, 0.20)', // state.returned
  current: palette.state.review,
  grid: palette.paper.rule,
  axis: palette.ink.muted,
  zero: palette.ink.faint,
  mark: palette.ink.DEFAULT,
  missing: palette.verdict.fail,
}

/** The x range on screen, falling back to the whole capture before uPlot has set one. */
function xRange(u: uPlot, whole: { from: number, to: number }): [number, number] {
  return [u.scales.x!.min ?? whole.from, u.scales.x!.max ?? whole.to]
}

/** Fill under the trace: one tint above the zero line, another below it. */
export function halfCycleFill(u: uPlot): CanvasGradient | string {
  const top = u.bbox.top
  const height = u.bbox.height
  if (!(height > 0)) return WAVEFORM_COLOURS.positive
  const zero = Math.min(1, Math.max(0, (u.valToPos(0, 'v', true) - top) / height))
  const gradient = u.ctx.createLinearGradient(0, top, 0, top + height)
  gradient.addColorStop(0, WAVEFORM_COLOURS.positive)
  gradient.addColorStop(zero, WAVEFORM_COLOURS.positive)
  gradient.addColorStop(zero, WAVEFORM_COLOURS.negative)
  gradient.addColorStop(1, WAVEFORM_COLOURS.negative)
  return gradient
}

/** Hatches the side of the zero line where a missing or erratic half-cycle should have been. */
function hatchHalfCycle(u: uPlot, h: HalfCycleDetail, ratio: number) {
  const ctx = u.ctx
  const { top, height } = u.bbox
  const x0 = u.valToPos(h.start, 'x', true)
  const x1 = u.valToPos(h.end, 'x', true)
  const yZero = u.valToPos(0, 'v', true)
  const y0 = h.polarity === 'positive' ? top : yZero
  const y1 = h.polarity === 'positive' ? yZero : top + height
  ctx.fillStyle = 'rgba(163, 35, 27, 0.07)'
  ctx.fillRect(x0, y0, x1 - x0, y1 - y0)
  ctx.strokeStyle = 'rgba(163, 35, 27, 0.35)'
  ctx.lineWidth = 1 * ratio
  ctx.beginPath()
  const step = 9 * ratio
  for (let x = x0 - (y1 - y0); x < x1; x += step) {
    ctx.moveTo(Math.max(x, x0), y1 - Math.max(0, x0 - x))
    const endX = Math.min(x + (y1 - y0), x1)
    ctx.lineTo(endX, y1 - (endX - x))
  }
  ctx.stroke()
}

/** Behind the trace: supply zero crossings as faint lines, missing or erratic half-cycles hatched. */
export function drawHalfCycles(u: uPlot, halfCycles: HalfCycleDetail[], whole: { from: number, to: number }, ratio: number) {
  const ctx = u.ctx
  const { left, top, width, height } = u.bbox
  const [xMin, xMax] = xRange(u, whole)
  const inView = halfCycles.filter(h => h.end >= xMin && h.start <= xMax)
  ctx.save()
  ctx.beginPath()
  ctx.rect(left, top, width, height)
  ctx.clip()
  const spacing = inView.length > 0 ? width / inView.length : 0
  for (const h of inView) if (h.shape === 'absent' || h.shape === 'erratic') hatchHalfCycle(u, h, ratio)
  if (spacing > 14 * ratio) {
    ctx.strokeStyle = 'rgba(111, 101, 87, 0.45)'
    ctx.lineWidth = 1 * ratio
    ctx.setLineDash([2 * ratio, 3 * ratio])
    ctx.beginPath()
    for (const h of inView) {
      const x = Math.round(u.valToPos(h.start, 'x', true)) + 0.5
      ctx.moveTo(x, top)
      ctx.lineTo(x, top + height)
    }
    ctx.stroke()
    ctx.setLineDash([])
  }
  ctx.restore()
}

/** The zero line, over the fill so both tints meet on it. */
export function drawZeroLine(u: uPlot, ratio: number) {
  const ctx = u.ctx
  const y = Math.round(u.valToPos(0, 'v', true)) + 0.5
  ctx.save()
  ctx.strokeStyle = WAVEFORM_COLOURS.zero
  ctx.lineWidth = ratio
  ctx.beginPath()
  ctx.moveTo(u.bbox.left, y)
  ctx.lineTo(u.bbox.left + u.bbox.width, y)
  ctx.stroke()
  ctx.restore()
}

/** Switch-on: a filled triangle pointing up. Switch-off: a hollow triangle pointing down. */
function drawMarker(ctx: CanvasRenderingContext2D, x: number, y: number, edge: CutPoint['edge'], size: number) {
  ctx.beginPath()
  if (edge === 'switch_on') {
    ctx.moveTo(x, y - size)
    ctx.lineTo(x + size * 0.9, y + size * 0.6)
    ctx.lineTo(x - size * 0.9, y + size * 0.6)
    ctx.closePath()
    ctx.fillStyle = WAVEFORM_COLOURS.mark
    ctx.fill()
  }
  else {
    ctx.moveTo(x, y + size)
    ctx.lineTo(x + size * 0.9, y - size * 0.6)
    ctx.lineTo(x - size * 0.9, y - size * 0.6)
    ctx.closePath()
    ctx.fillStyle = palette.paper.raised
    ctx.fill()
    ctx.strokeStyle = WAVEFORM_COLOURS.mark
    ctx.stroke()
  }
}

/**
 * The switching instants in view, each a marker on the supply curve (with a dashed line when
 * there is room). Markers closer than a few pixels are noise, not information: none are drawn
 * and the answer is true, so the plot can ask for a zoom instead.
 */
export function drawCutPoints(u: uPlot, cutPoints: CutPoint[], whole: { from: number, to: number }, ratio: number): boolean {
  const [xMin, xMax] = xRange(u, whole)
  const { left, top, width, height } = u.bbox
  const inView = cutPoints.filter(c => c.t >= xMin && c.t <= xMax)
  const crowded = inView.length > width / (7 * ratio)
  if (crowded || inView.length === 0) return crowded && inView.length > 0
  const ctx = u.ctx
  ctx.save()
  ctx.beginPath()
  ctx.rect(left - 8 * ratio, top - 8 * ratio, width + 16 * ratio, height + 16 * ratio)
  ctx.clip()
  const lines = inView.length < width / (18 * ratio)
  ctx.lineWidth = 1.5 * ratio
  for (const c of inView) {
    const x = u.valToPos(c.t, 'x', true)
    const y = u.valToPos(c.supplyV, 'v', true)
    if (lines) {
      ctx.strokeStyle = 'rgba(31, 27, 22, 0.35)'
      ctx.lineWidth = 1 * ratio
      ctx.setLineDash([4 * ratio, 3 * ratio])
      ctx.beginPath()
      ctx.moveTo(Math.round(x) + 0.5, top)
      ctx.lineTo(Math.round(x) + 0.5, top + height)
      ctx.stroke()
      ctx.setLineDash([])
      ctx.lineWidth = 1.5 * ratio
    }
    drawMarker(ctx, x, y, c.edge, 6 * ratio)
  }
  ctx.restore()
  return false
}
