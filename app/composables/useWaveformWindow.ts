import type { SeriesDto } from '#shared/types/captures'

// The window of a capture the plot shows: its time range (zoom and pan, kept inside the capture
// and never narrower than 16 samples) and its data. The server sends every view min/max-decimated
// (two points per pixel column), so a zoom asks it for the window again and the detail on screen
// is the capture's own, never interpolated. The whole capture's overview stays underneath, so a
// pan shows coarse data at once while the detail loads.

export interface WaveformSource {
  captureId: () => number
  /** The whole capture, decimated. */
  series: () => SeriesDto
  sampleRateHz: () => number
}

/** What the window needs from the chart that draws it. */
export interface WindowChart {
  setScale: (from: number, to: number) => void
  setData: (data: number[][]) => void
  /** Width of the plotting area in CSS pixels, or null before the chart exists. */
  widthPx: () => number | null
}

/** First index whose time is at least `x` (arrays are in time order). */
export function lowerBound(t: number[], x: number): number {
  let lo = 0
  let hi = t.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (t[mid]! < x) lo = mid + 1
    else hi = mid
  }
  return lo
}

export function useWaveformWindow(source: WaveformSource, chart: WindowChart) {
  const full = computed(() => ({ from: source.series().from, to: source.series().to }))
  const view = ref<{ from: number, to: number }>({ ...full.value })
  const loading = ref(false)
  const detailProblem = ref('')
  /** How many capture samples each min/max pair of points stands for in the current view (≤ 1: every sample). */
  const samplesPerPoint = ref<number | null>(null)
  const hasCurrent = computed(() => Array.isArray(source.series().i) && source.series().i!.length === source.series().t.length)
  const zoomed = computed(() => view.value.from > full.value.from + 1e-12 || view.value.to < full.value.to - 1e-12)
  const minSpan = computed(() => 16 / Math.max(1, source.sampleRateHz()))

  let detail: SeriesDto | null = null
  let requestSeq = 0
  let fetchTimer: ReturnType<typeof setTimeout> | null = null

  /** The overview with the fetched window's detail spliced in. */
  function plotData(): number[][] {
    const o = source.series()
    const channels = (s: SeriesDto) => (hasCurrent.value ? [s.t, s.v, s.i ?? []] : [s.t, s.v])
    if (detail === null || detail.t.length === 0) return channels(o)
    const a = lowerBound(o.t, detail.t[0]!)
    const b = lowerBound(o.t, detail.t[detail.t.length - 1]! + 1e-15)
    const splice = (outer: number[], inner: number[]) => outer.slice(0, a).concat(inner, outer.slice(b))
    const t = splice(o.t, detail.t)
    const v = splice(o.v, detail.v)
    if (!hasCurrent.value) return [t, v]
    return [t, v, splice(o.i ?? [], detail.i ?? detail.t.map(() => 0))]
  }

  function countSamplesPerPoint() {
    const { from, to } = view.value
    const data = plotData()[0]!
    const points = Math.max(1, lowerBound(data, to) - lowerBound(data, from))
    const samples = (to - from) * source.sampleRateHz()
    samplesPerPoint.value = samples <= points * 1.02 ? 1 : samples / (points / 2)
  }

  function clampView(from: number, to: number): { from: number, to: number } {
    const span = Math.min(full.value.to - full.value.from, Math.max(minSpan.value, to - from))
    let a = from
    if (a < full.value.from) a = full.value.from
    if (a + span > full.value.to) a = full.value.to - span
    return { from: a, to: a + span }
  }

  function setView(from: number, to: number) {
    const next = clampView(from, to)
    chart.setScale(next.from, next.to)
  }

  async function loadDetail() {
    const { from, to } = view.value
    const seq = ++requestSeq
    if (!zoomed.value) {
      detail = null
      loading.value = false
      detailProblem.value = ''
      chart.setData(plotData())
      countSamplesPerPoint()
      return
    }
    // A margin either side, so a short pan still lands on real detail.
    const span = to - from
    const a = Math.max(full.value.from, from - 0.25 * span)
    const b = Math.min(full.value.to, to + 0.25 * span)
    const width = chart.widthPx() ?? 600
    const buckets = Math.max(10, Math.min(8000, Math.round((width * (b - a)) / span)))
    loading.value = true
    try {
      const answer = await $fetch(`/api/captures/${source.captureId()}/series`, { query: { from: a, to: b, buckets } })
      if (seq !== requestSeq || chart.widthPx() === null) return
      detail = answer
      detailProblem.value = ''
      chart.setData(plotData())
      countSamplesPerPoint()
    }
    catch {
      if (seq === requestSeq) detailProblem.value = 'The detail of this window could not be loaded; the overview is shown.'
    }
    finally {
      if (seq === requestSeq) loading.value = false
    }
  }

  function scheduleDetail() {
    if (fetchTimer) clearTimeout(fetchTimer)
    fetchTimer = setTimeout(() => void loadDetail(), 140)
  }

  /**
   * The chart's x scale moved (a drag-select, a gesture, a button). Returns the range to set
   * instead when the move reached past the capture's ends or below the smallest window.
   */
  function scaleChanged(from: number, to: number): { from: number, to: number } | null {
    const next = clampView(from, to)
    if (next.from === view.value.from && next.to === view.value.to) return null
    view.value = next
    if (Math.abs(next.from - from) > 1e-12 || Math.abs(next.to - to) > 1e-12) return next
    countSamplesPerPoint()
    scheduleDetail()
    return null
  }

  /** Back to the whole capture's overview (a new chart, or new data). */
  function reset() {
    view.value = { ...full.value }
    detail = null
  }

  function dispose() {
    if (fetchTimer) clearTimeout(fetchTimer)
    requestSeq++
  }

  const zoomAround = (centre: number, factor: number) => {
    const { from, to } = view.value
    setView(centre - (centre - from) * factor, centre + (to - centre) * factor)
  }
  const zoomBy = (factor: number) => zoomAround((view.value.from + view.value.to) / 2, factor)
  const panBy = (share: number) => {
    const span = view.value.to - view.value.from
    setView(view.value.from + share * span, view.value.to + share * span)
  }
  /** A window of `span` seconds around the centre of the current one. */
  const showSpan = (span: number) => {
    const centre = (view.value.from + view.value.to) / 2
    setView(centre - span / 2, centre + span / 2)
  }
  const resetZoom = () => setView(full.value.from, full.value.to)

  return {
    view, full, zoomed, hasCurrent, loading, detailProblem, samplesPerPoint,
    plotData, countSamplesPerPoint, scaleChanged, reset, dispose,
    setView, zoomAround, zoomBy, panBy, showSpan, resetZoom,
  }
}

export type WaveformWindow = ReturnType<typeof useWaveformWindow>

/**
 * Pan with Shift-drag (or the middle button) or one finger, zoom with a pinch or Ctrl-wheel.
 * Returns the function that removes the listeners.
 */
export function attachWindowGestures(over: HTMLElement, wrap: HTMLElement, win: WaveformWindow): () => void {
  const { view } = win
  let panStart: { x: number, from: number, to: number } | null = null
  let pinch: { distance: number, mid: number, from: number, to: number } | null = null
  const perPixel = () => (view.value.to - view.value.from) / Math.max(1, over.clientWidth)
  const valueAt = (clientX: number) => view.value.from + (clientX - over.getBoundingClientRect().left) * perPixel()

  const onMouseDown = (e: MouseEvent) => {
    if (!(e.shiftKey || e.button === 1) || !over.contains(e.target as Node)) return
    e.preventDefault()
    e.stopPropagation()
    panStart = { x: e.clientX, from: view.value.from, to: view.value.to }
    window.addEventListener('mousemove', onMouseMove)
    window.addEventListener('mouseup', onMouseUp, { once: true })
  }
  const onMouseMove = (e: MouseEvent) => {
    if (!panStart) return
    const shift = (panStart.x - e.clientX) * perPixel()
    win.setView(panStart.from + shift, panStart.to + shift)
  }
  const onMouseUp = () => {
    panStart = null
    window.removeEventListener('mousemove', onMouseMove)
  }
  const onWheel = (e: WheelEvent) => {
    if (!e.ctrlKey) return
    e.preventDefault()
    win.zoomAround(valueAt(e.clientX), e.deltaY < 0 ? 0.8 : 1.25)
  }
  const onTouchStart = (e: TouchEvent) => {
    if (e.touches.length === 1) {
      panStart = { x: e.touches[0]!.clientX, from: view.value.from, to: view.value.to }
      pinch = null
    }
    else if (e.touches.length === 2) {
      const [a, b] = [e.touches[0]!, e.touches[1]!]
      pinch = { distance: Math.max(10, Math.abs(a.clientX - b.clientX)), mid: valueAt((a.clientX + b.clientX) / 2), from: view.value.from, to: view.value.to }
      panStart = null
    }
  }
  const onTouchMove = (e: TouchEvent) => {
    if (pinch && e.touches.length === 2) {
      e.preventDefault()
      const [a, b] = [e.touches[0]!, e.touches[1]!]
      const factor = pinch.distance / Math.max(10, Math.abs(a.clientX - b.clientX))
      win.setView(pinch.mid - (pinch.mid - pinch.from) * factor, pinch.mid + (pinch.to - pinch.mid) * factor)
    }
    else if (panStart && e.touches.length === 1 && win.zoomed.value) {
      const dx = panStart.x - e.touches[0]!.clientX
      if (Math.abs(dx) > 4) e.preventDefault()
      const shift = dx * ((panStart.to - panStart.from) / Math.max(1, over.clientWidth))
      win.setView(panStart.from + shift, panStart.to + shift)
    }
  }
  const onTouchEnd = () => {
    panStart = null
    pinch = null
  }
  wrap.addEventListener('mousedown', onMouseDown, true)
  over.addEventListener('wheel', onWheel, { passive: false })
  over.addEventListener('touchstart', onTouchStart, { passive: true })
  over.addEventListener('touchmove', onTouchMove, { passive: false })
  over.addEventListener('touchend', onTouchEnd)
  return () => {
    wrap.removeEventListener('mousedown', onMouseDown, true)
    window.removeEventListener('mousemove', onMouseMove)
    over.removeEventListener('wheel', onWheel)
    over.removeEventListener('touchstart', onTouchStart)
    over.removeEventListener('touchmove', onTouchMove)
    over.removeEventListener('touchend', onTouchEnd)
  }
}
