import type { StepVerdict } from '#shared/types/verdicts'
import type { FlowGraph, FlowGraphEdge, FlowGraphNode } from '#shared/utils/diagnosis/flow-graph'

// A procedure's flow placed on a page: boxes for steps and conclusions, verdict labels on the
// edges, top to bottom so it reads on a phone. The layout package is passed in rather than
// imported, so pages that only draw a layout computed on the server never load it.

export type DagreModule = typeof import('@dagrejs/dagre')

export interface Point { x: number, y: number }

export interface PlacedNode extends FlowGraphNode {
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
  stepWidth: 164,
  endWidth: 136,
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

// Average advance of characters in the UI sans, in ems (measured once from system-ui at 12 px;
// close enough to break lines where the browser would, without a DOM on the server).
function charEm(ch: string): number {
  if (/[ilj.,;:!|'’`()[\]]/.test(ch)) return 0.28
  if (/[mwMW@]/.test(ch)) return 0.86
  if (/[A-Z]/.test(ch)) return 0.66
  if (/\d/.test(ch)) return 0.56
  if (ch === ' ') return 0.27
  return 0.52
}

/** The width a text takes at a font size, estimated. */
export function textWidth(text: string, fontPx: number): number {
  let em = 0
  for (const ch of text) em += charEm(ch)
  return em * fontPx
}

/**
 * Breaks a text into lines no wider than `maxPx`, at spaces; a word longer than a line is cut.
 * Beyond `maxLines` the last line ends in an ellipsis.
 *
 * @example
 * wrapText('Diode-test Q1 source to drain', 100, 12.5) // ['Diode-test Q1', 'source to drain']
 */
export function wrapText(text: string, maxPx: number, fontPx: number, maxLines = Infinity): string[] {
  const lines: string[] = []
  let line = ''
  for (const word of text.trim().split(/\s+/).filter(Boolean)) {
    const candidate = line ? `${line} ${word}` : word
    if (!line || textWidth(candidate, fontPx) <= maxPx) {
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
  while (textWidth(last, fontPx) > maxPx && last.length > 2) last = `${last.slice(0, -2)}…`
  kept[maxLines - 1] = last
  return kept
}

function sized(node: FlowGraphNode): Omit<PlacedNode, 'x' | 'y'> {
  const s = FLOW_SIZES
  const isStep = node.kind === 'step' && node.number !== undefined
  const width = isStep ? s.stepWidth : s.endWidth
  const inner = width - 2 * s.padX - (isStep ? s.numberRoom : 0)
  const lines = wrapText(node.label, inner, s.titleFont, s.maxLines)
  const expectedLine = node.expected ? wrapText(node.expected, inner, s.labelFont, 1)[0]! : null
  // A conclusion carries a small "Confirms" line over its cause.
  const extra = (expectedLine ? s.lineHeight : 0) + (node.kind === 'conclusion' ? s.lineHeight - 2 : 0)
  const height = Math.max(isStep ? 30 : 26, 2 * s.padY + lines.length * s.lineHeight + extra)
  return { ...node, width, height, lines, expectedLine }
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
  const nodes = new Map(graph.nodes.map(n => [n.id, sized(n)]))
  for (const n of nodes.values()) g.setNode(n.id, { width: n.width, height: n.height })
  for (const e of graph.edges) {
    const labelWidth = textWidth(e.label, s.labelFont) + 12
    g.setEdge(e.from, e.to, { width: labelWidth, height: s.labelHeight, labelpos: 'c', minlen: 1, weight: e.implicit ? 2 : 1 })
  }
  dagre.layout(g)
  const placed: PlacedNode[] = graph.nodes.map((n) => {
    const box = nodes.get(n.id)!
    const at = g.node(n.id) as { x: number, y: number }
    return { ...box, x: round(at.x - box.width / 2), y: round(at.y - box.height / 2) }
  })
  const edges: PlacedEdge[] = graph.edges.map((e) => {
    const at = g.edge(e.from, e.to) as { points: Point[], x: number, y: number, width: number }
    return { ...e, points: at.points.map(p => ({ x: round(p.x), y: round(p.y) })), labelX: round(at.x), labelY: round(at.y), labelWidth: round(at.width) }
  })
  const size = g.graph() as { width: number, height: number }
  return { width: Math.ceil(size.width), height: Math.ceil(size.height), nodes: placed, edges }
}

const round = (x: number) => Math.round(x * 10) / 10

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
