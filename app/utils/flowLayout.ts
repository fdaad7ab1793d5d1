import type { StepVerdict } from '#shared/types/verdicts'
import type { FlowGraph, FlowGraphEdge, FlowGraphNode } from '#shared/utils/diagnosis/flow-graph'

// A procedure's flow placed on a page: boxes for steps and conclusions, verdict labels on the
// edges, top to bottom so it reads on a phone. The layout package is passed in rather than
// imported, so pages that only draw a layout computed on the server never load it.

export type DagreModule = typeof import('@dagrejs/dagre')

export interface Point { x: number, y: number }

export interface PlacedNode extends FlowGraphNode {
  /** The graph node this box draws: an end box reached from several steps is drawn once per step, beside each. */
  baseId: string
  /** Top-left corner and size, in the diagram's units (CSS pixels at scale 1). */
  x: number
  y: number
  width: number
  height: number
  /** The label broken into the lines drawn. */
  lines: string[]
  /** The good reading in words, on its own line under a step's title. */
  expectedLine: string | null
}

export interface PlacedEdge extends FlowGraphEdge {
  /** The graph node the edge ends at (`to` names the box it is drawn to). */
  baseTo: string
  points: Point[]
  /** Centre of the verdict label. */
  labelX: number
  labelY: number
  labelWidth: number
}

/** Where a record stands in the flow, as the diagram marks it (the parts of `followFlow` it draws). */
export interface DiagramPosition {
  path: string[]
  taken: Array<{ stepKey: string, verdict: StepVerdict }>
  current: string | null
  offPath: string[]
  concluded: string | null
}

export interface FlowLayout {
  width: number
  height: number
  nodes: PlacedNode[]
  edges: PlacedEdge[]
}

/** Sizes of the drawing, in CSS pixels at scale 1. */
export const FLOW_SIZES = {
  stepWidth: 166,
  endWidth: 128,
  /** The narrowest end box ("Escalate"). */
  minEndWidth: 76,
  titleFont: 12.5,
  lineHeight: 15,
  labelFont: 11,
  labelHeight: 17,
  padX: 9,
  padY: 8,
  /** Room for the step number beside the title. */
  numberRoom: 22,
  maxLines: 4,
  margin: 6,
} as const

// Advance of characters in the UI sans, in ems, regular and bold: measured in Chromium on the
// widest common system face (DejaVu Sans), so boxes hold their words in any narrower one too.
const EM = {
  regular: { narrow: 0.34, wide: 0.93, upper: 0.66, digit: 0.64, space: 0.32, other: 0.57 },
  bold: { narrow: 0.4, wide: 1.02, upper: 0.74, digit: 0.7, space: 0.35, other: 0.64 },
} as const

function charEm(ch: string, bold: boolean): number {
  const em = bold ? EM.bold : EM.regular
  if (/[ilj.,;:!|'’`()[\]]/.test(ch)) return em.narrow
  if (/[mwMW@]/.test(ch)) return em.wide
  if (/[A-Z]/.test(ch)) return em.upper
  if (/\d/.test(ch)) return em.digit
  if (ch === ' ') return em.space
  return em.other
}

/** The width a text takes at a font size, estimated. */
export function textWidth(text: string, fontPx: number, bold = false): number {
  let em = 0
  for (const ch of text) em += charEm(ch, bold)
  return em * fontPx
}

/**
 * Breaks a text into lines no wider than `maxPx`, at spaces; a word longer than a line is cut.
 * Beyond `maxLines` the last line ends in an ellipsis.
 *
 * @example
 * wrapText('Diode-test Q1 source to drain', 100, 12.5) // ['Diode-test Q1', 'source to drain']
 */
export function wrapText(text: string, maxPx: number, fontPx: number, maxLines = Infinity, bold = false): string[] {
  const lines: string[] = []
  let line = ''
  for (const word of text.trim().split(/\s+/).filter(Boolean)) {
    const candidate = line ? `${line} ${word}` : word
    if (!line || textWidth(candidate, fontPx, bold) <= maxPx) {
      line = candidate
      continue
    }
    lines.push(line)
    line = word
  }
  if (line) lines.push(line)
  if (lines.length <= maxLines) return lines
  const kept = lines.slice(0, maxLines)
  let last = `${kept[maxLines - 1]!}…`
  while (textWidth(last, fontPx, bold) > maxPx && last.length > 2) last = `${last.slice(0, -2)}…`
  kept[maxLines - 1] = last
  return kept
}

function sized(node: FlowGraphNode, id: string): Omit<PlacedNode, 'x' | 'y'> {
  const s = FLOW_SIZES
  const isStep = node.kind === 'step' && node.number !== undefined
  // Step titles are set in the regular weight, the ends in bold.
  const bold = !isStep
  const inner0 = (isStep ? s.stepWidth : s.endWidth) - 2 * s.padX - (isStep ? s.numberRoom : 0)
  const lines = wrapText(node.label, inner0, s.titleFont, s.maxLines, bold)
  // End boxes take the width their words need; steps all take the same.
  const width = isStep ? s.stepWidth : Math.max(s.minEndWidth, Math.ceil(Math.max(...lines.map(l => textWidth(l, s.titleFont, bold)), node.kind === 'conclusion' ? textWidth('CONFIRMS', s.labelFont - 1, true) : 0) + 2 * s.padX + 2))
  const inner = width - 2 * s.padX - (isStep ? s.numberRoom : 0)
  const expectedLine = node.expected ? wrapText(node.expected, inner, s.labelFont, 1)[0]! : null
  // A conclusion carries a small "Confirms" line over its cause.
  const extra = (expectedLine ? s.lineHeight : 0) + (node.kind === 'conclusion' ? s.lineHeight - 2 : 0)
  const height = Math.max(isStep ? 30 : 26, 2 * s.padY + lines.length * s.lineHeight + extra)
  return { ...node, id, baseId: node.id, width, height, lines, expectedLine }
}

/**
 * Places every node and edge of a flow graph, ranks top to bottom, with @dagrejs/dagre (network
 * simplex ranking, crossing reduction, Brandes–Köpf positions). Deterministic: the same graph
 * gives the same layout on the server and in the browser.
 *
 * @example
 * const layout = layoutFlow(await import('@dagrejs/dagre'), flowGraph(steps, causes))
 */
export function layoutFlow(dagre: DagreModule, graph: FlowGraph): FlowLayout {
  const s = FLOW_SIZES
  const g = new dagre.graphlib.Graph({ multigraph: false })
  g.setGraph({ rankdir: 'TB', nodesep: 16, ranksep: 14, edgesep: 8, marginx: s.margin, marginy: s.margin })
  g.setDefaultEdgeLabel(() => ({}))
  // An end (a conclusion, "escalate", the end) reached from several steps gets a box beside each
  // of them: one shared box would pull long edges across the drawing and widen it.
  const byId = new Map(graph.nodes.map(n => [n.id, n]))
  const inbound = new Map<string, number>()
  for (const e of graph.edges) inbound.set(e.to, (inbound.get(e.to) ?? 0) + 1)
  const isEnd = (id: string) => byId.get(id)?.kind !== 'step'
  const drawnTo = (e: FlowGraphEdge) => (isEnd(e.to) && inbound.get(e.to)! > 1 ? `${e.to}~${e.from}` : e.to)
  const boxes = new Map<string, Omit<PlacedNode, 'x' | 'y'>>()
  for (const n of graph.nodes) if (!isEnd(n.id) || inbound.get(n.id) === 1 || !inbound.has(n.id)) boxes.set(n.id, sized(n, n.id))
  for (const e of graph.edges) if (!boxes.has(drawnTo(e))) boxes.set(drawnTo(e), sized(byId.get(e.to)!, drawnTo(e)))
  for (const n of boxes.values()) g.setNode(n.id, { width: n.width, height: n.height })
  for (const e of graph.edges) {
    const labelWidth = textWidth(e.label, s.labelFont, true) + 12
    // Step-to-step edges weigh more, so the path through the steps is drawn straight.
    g.setEdge(e.from, drawnTo(e), { width: labelWidth, height: s.labelHeight, labelpos: 'c', minlen: 1, weight: isEnd(e.to) ? 1 : 4 })
  }
  dagre.layout(g, spineHints(graph, drawnTo, isEnd))
  const placed: PlacedNode[] = [...boxes.values()].map((box) => {
    const at = g.node(box.id) as { x: number, y: number }
    return { ...box, x: round(at.x - box.width / 2), y: round(at.y - box.height / 2) }
  })
  const edges: PlacedEdge[] = graph.edges.map((e) => {
    const to = drawnTo(e)
    const at = g.edge(e.from, to) as { points: Point[], x: number, y: number, width: number }
    return { ...e, to, baseTo: e.to, points: at.points.map(p => ({ x: round(p.x), y: round(p.y) })), labelX: round(at.x), labelY: round(at.y), labelWidth: round(at.width) }
  })
  const size = g.graph() as { width: number, height: number }
  return { width: Math.ceil(size.width), height: Math.ceil(size.height), nodes: placed, edges }
}

const round = (x: number) => Math.round(x * 10) / 10

/**
 * Keeps the main line of steps straight down the middle (dagre's `corePath`) and puts the end
 * boxes hanging off it on alternate sides of the next step (`constraints`), so a flow that is a
 * line of checks with conclusions beside it stays about two boxes wide.
 */
function spineHints(graph: FlowGraph, drawnTo: (e: FlowGraphEdge) => string, isEnd: (id: string) => boolean) {
  const steps = graph.nodes.filter(n => n.kind === 'step' && n.number !== undefined).sort((a, b) => a.number! - b.number!)
  const order = new Map(steps.map((n, i) => [n.id, i]))
  const spine: string[] = []
  for (let at: string | undefined = graph.start ?? undefined; at && !spine.includes(at);) {
    spine.push(at)
    const onward = graph.edges.filter(e => e.from === at && !isEnd(e.to) && order.has(e.to))
    // The main line goes on to the nearest following step.
    onward.sort((a, b) => order.get(a.to)! - order.get(b.to)!)
    at = onward.find(e => order.get(e.to)! > order.get(at!)!)?.to
  }
  const constraints: Array<{ left: string, right: string }> = []
  spine.forEach((id, i) => {
    const next = spine[i + 1]
    if (!next) return
    graph.edges.filter(e => e.from === id && isEnd(e.to)).forEach((e, j) => {
      constraints.push(j % 2 === 0 ? { left: drawnTo(e), right: next } : { left: next, right: drawnTo(e) })
    })
  })
  return { corePath: spine, constraints }
}

/**
 * A short, stable name for a flow graph, so one layout is computed once per graph and shared by
 * every diagram of it on a page (FNV-1a over the graph's JSON).
 */
export function flowGraphKey(graph: FlowGraph): string {
  const text = JSON.stringify([graph.nodes, graph.edges])
  let hash = 0x811C9DC5
  for (let i = 0; i < text.length; i++) {
    hash ^= text.charCodeAt(i)
    hash = Math.imul(hash, 0x01000193) >>> 0
  }
  return hash.toString(36)
}

/** The path of an edge through its points, with rounded bends. */
export function edgePath(points: Point[]): string {
  if (points.length === 0) return ''
  const [first, ...rest] = points
  let d = `M${first!.x},${first!.y}`
  if (rest.length === 1) return `${d}L${rest[0]!.x},${rest[0]!.y}`
  // Quadratic curves through the midpoints: smooth, and still ending exactly at the last point.
  for (let i = 0; i < rest.length - 1; i++) {
    const p = rest[i]!
    const q = rest[i + 1]!
    const mid = i === rest.length - 2 ? q : { x: (p.x + q.x) / 2, y: (p.y + q.y) / 2 }
    d += `Q${p.x},${p.y} ${round(mid.x)},${round(mid.y)}`
  }
  return d
}
