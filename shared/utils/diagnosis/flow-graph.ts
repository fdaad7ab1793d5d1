/**
 * A layout-agnostic description of a procedure's flow, for drawing on screen and on the bench
 * card: steps and conclusions as nodes, verdicts as labelled edges. Feed it to any graph layout
 * package; nothing here knows about positions.
 */
import { describeExpected } from '../readings'
import { ESCALATE, verdictLabel } from '../../types/verdicts'
import type { ReasoningCause, ReasoningStep, StepVerdict } from '../../types/verdicts'
import { flowEdges, isFlow } from './flow'
import type { FlowTarget } from './flow'

export interface FlowGraphNode {
  /** `step:<key>`, `cause:<key>`, `escalate` or `end`. */
  id: string
  kind: 'step' | 'conclusion' | 'escalate' | 'end'
  label: string
  stepKey?: string
  /** 1-based position of a step in the procedure. */
  number?: number
  /** The good reading in words (`0.4 V – 0.9 V`, `open`), or null for a step without a measurement. */
  expected?: string | null
  causeKey?: string
}

export interface FlowGraphEdge {
  /** `<from>-><to>`, unique. */
  id: string
  from: string
  to: string
  /** The verdicts that take this edge, in the step's verdict order. */
  verdicts: StepVerdict[]
  /** `low / OL`. */
  label: string
  /** No verdict on it was sent there by the author: they go on to the following step. */
  implicit: boolean
}

export interface FlowGraph {
  isFlow: boolean
  /** The first step's node id, or null for a procedure without steps. */
  start: string | null
  nodes: FlowGraphNode[]
  edges: FlowGraphEdge[]
}

export const END_LABEL = 'End of the procedure'
export const ESCALATE_LABEL = 'Escalate'

function targetId(to: FlowTarget): string {
  if (to.kind === 'step') return `step:${to.stepKey}`
  if (to.kind === 'end') return 'end'
  return to.conclude === ESCALATE ? 'escalate' : `cause:${to.conclude}`
}

/**
 * The flow as nodes and edges. Verdicts of one step that lead to the same place share one edge
 * (`low / high`). A procedure that is not a flow gives its plain chain of steps.
 *
 * @example
 * const g = flowGraph(content.steps, content.causes)
 * // g.nodes: [{ id: 'step:capture', kind: 'step', label: 'Capture the load voltage', number: 1, expected: null }, …,
 * //           { id: 'cause:bridge_shorted', kind: 'conclusion', label: 'Bridge diode shorted', causeKey: 'bridge_shorted' }]
 * // g.edges: [{ id: 'step:capture->step:switch', from: 'step:capture', to: 'step:switch', verdicts: ['fail'], label: 'fail', implicit: false }, …]
 */
export function flowGraph(
  steps: ReadonlyArray<Pick<ReasoningStep, 'key' | 'title' | 'measurement' | 'failPointsTo' | 'verdicts'>>,
  causes: ReadonlyArray<Pick<ReasoningCause, 'key' | 'name'>>,
): FlowGraph {
  const causeName = new Map(causes.map(c => [c.key, c.name]))
  const nodes: FlowGraphNode[] = steps.map((s, i) => ({
    id: `step:${s.key}`,
    kind: 'step',
    label: s.title,
    stepKey: s.key,
    number: i + 1,
    expected: s.measurement ? describeExpected(s.measurement) : null,
  }))
  const ends = new Map<string, FlowGraphNode>()
  const merged = new Map<string, FlowGraphEdge>()
  for (const e of flowEdges(steps)) {
    const to = targetId(e.to)
    if (!nodes.some(n => n.id === to) && !ends.has(to)) {
      if (e.to.kind === 'end') ends.set(to, { id: to, kind: 'end', label: END_LABEL })
      else if (e.to.kind === 'conclusion' && e.to.conclude === ESCALATE) ends.set(to, { id: to, kind: 'escalate', label: ESCALATE_LABEL })
      else if (e.to.kind === 'conclusion') ends.set(to, { id: to, kind: 'conclusion', label: causeName.get(e.to.conclude) ?? e.to.conclude, causeKey: e.to.conclude })
      // A `next` to an unknown step is drawn to a node named after it, so the slip shows.
      else ends.set(to, { id: to, kind: 'step', label: e.to.stepKey, stepKey: e.to.stepKey, expected: null })
    }
    const id = `step:${e.from}->${to}`
    const edge = merged.get(id)
    if (edge) {
      edge.verdicts.push(e.verdict)
      edge.label = edge.verdicts.map(verdictLabel).join(' / ')
      edge.implicit &&= !e.explicit
    }
    else {
      merged.set(id, { id, from: `step:${e.from}`, to, verdicts: [e.verdict], label: verdictLabel(e.verdict), implicit: !e.explicit })
    }
  }
  return { isFlow: isFlow(steps), start: steps[0] ? `step:${steps[0].key}` : null, nodes: [...nodes, ...ends.values()], edges: [...merged.values()] }
}
