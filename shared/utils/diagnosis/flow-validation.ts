/**
 * The checks a procedure's verdict maps and flow must pass at submission (drafts stay loose).
 * Each problem is keyed by the path of the field at fault, in the dotted form of Benchlore's
 * field errors (`steps.2.verdicts.in_range.next`), with a message naming the step and verdict.
 */
import { ESCALATE, STEP_VERDICTS, possibleVerdicts, verdictCondition, verdictLabel } from '../../types/verdicts'
import type { ReasoningCause, ReasoningStep, StepVerdict } from '../../types/verdicts'
import { flowEdges, isFlow, reachableSteps } from './flow'

export interface FlowIssue {
  /** For zod's `ctx.addIssue({ code: 'custom', path, message })`. */
  path: Array<string | number>
  /** The same path with dots, as in `FieldErrors.fields`. */
  field: string
  message: string
}

export interface FlowContent {
  causes: ReadonlyArray<Pick<ReasoningCause, 'key'>>
  steps: ReadonlyArray<Pick<ReasoningStep, 'key' | 'title' | 'measurement' | 'failPointsTo' | 'verdicts'>>
}

function why(step: FlowContent['steps'][number], verdict: StepVerdict): string {
  const m = step.measurement
  if (!m) return 'a step without a measurement passes or fails'
  if (verdict === 'pass' || verdict === 'fail') return 'a step with a measurement reads in range, low, high or OL'
  if (verdict === 'high') return 'its expected range has no upper limit'
  if (verdict === 'low') return 'its expected range has no lower limit'
  return 'it has no expected range, only open'
}

/** The shortest chain of step keys from `from` to `to` along the flow's edges, both included. */
function chain(edges: ReturnType<typeof flowEdges>, from: string, to: string): string[] {
  const parent = new Map<string, string | null>([[from, null]])
  const queue = [from]
  while (queue.length > 0) {
    const key = queue.shift()!
    if (key === to) break
    for (const e of edges) {
      if (e.from !== key || e.to.kind !== 'step' || parent.has(e.to.stepKey)) continue
      parent.set(e.to.stepKey, key)
      queue.push(e.to.stepKey)
    }
  }
  const out: string[] = []
  for (let k: string | null | undefined = to; k !== null && k !== undefined; k = parent.get(k)) out.unshift(k)
  return out
}

/**
 * Every problem of the procedure's verdict maps and, when it is a flow, of the flow:
 *
 * - a verdict the step cannot give (`pass` on a measured step, `high` with no upper limit);
 * - a cause named by a verdict, or a `conclude`, that is not a cause of the procedure;
 * - a `next` that names no step; `next` and `conclude` on one verdict;
 * - a cause keyed `escalate` (the word is kept for handing a job on);
 * - in a flow: a `next` that closes a loop, and a step no path from the first step reaches.
 *
 * @example
 * flowIssues({ causes, steps })
 * // → [{ path: ['steps', 2, 'verdicts', 'in_range', 'next'], field: 'steps.2.verdicts.in_range.next',
 * //      message: 'step "Diode-test each bridge diode", if it reads in range: "s9" is not a step of this procedure' }]
 */
export function flowIssues(content: FlowContent): FlowIssue[] {
  const issues: FlowIssue[] = []
  const add = (path: Array<string | number>, message: string) => issues.push({ path, field: path.join('.'), message })
  const causeKeys = new Set(content.causes.map(c => c.key))
  const stepIndex = new Map<string, number>()
  content.steps.forEach((s, i) => {
    if (!stepIndex.has(s.key)) stepIndex.set(s.key, i)
  })
  const name = (i: number) => content.steps[i]!.title.trim() || content.steps[i]!.key || `${i + 1}`

  content.causes.forEach((c, i) => {
    if (c.key === ESCALATE) add(['causes', i, 'key'], `"${ESCALATE}" is kept for handing a job on; give this cause another key`)
  })

  content.steps.forEach((step, i) => {
    const possible = possibleVerdicts(step)
    for (const verdict of STEP_VERDICTS) {
      const entry = step.verdicts?.[verdict]
      if (!entry) continue
      const at = ['steps', i, 'verdicts', verdict]
      const where = `step "${name(i)}", ${verdictCondition(verdict)}`
      if (!possible.includes(verdict)) {
        add(at, `step "${name(i)}" cannot read ${verdictLabel(verdict)}: ${why(step, verdict)}`)
        continue
      }
      entry.causes?.forEach((k, j) => {
        if (!causeKeys.has(k)) add([...at, 'causes', j], `${where}: "${k}" is not a cause of this procedure`)
      })
      if (entry.next !== undefined && entry.conclude !== undefined) {
        add(at, `${where}: give either a next step or a conclusion, not both`)
      }
      if (entry.next !== undefined && !stepIndex.has(entry.next)) {
        add([...at, 'next'], `${where}: "${entry.next}" is not a step of this procedure`)
      }
      if (entry.conclude !== undefined && entry.conclude !== ESCALATE && !causeKeys.has(entry.conclude)) {
        add([...at, 'conclude'], `${where}: "${entry.conclude}" is not a cause of this procedure (nor "${ESCALATE}")`)
      }
    }
  })

  if (!isFlow(content.steps) || content.steps.length === 0) return issues
  const edges = flowEdges(content.steps)
  // Implicit edges only go forward, so every loop holds a `next` back to the same or an earlier step.
  for (const e of edges) {
    if (!e.explicit || e.to.kind !== 'step') continue
    const from = stepIndex.get(e.from)!
    const to = stepIndex.get(e.to.stepKey)
    if (to === undefined || to > from) continue
    if (!reachableSteps(content.steps, e.to.stepKey, edges).has(e.from)) continue
    const loop = [...chain(edges, e.to.stepKey, e.from), e.to.stepKey].join(' → ')
    add(['steps', from, 'verdicts', e.verdict, 'next'], `step "${name(from)}", ${verdictCondition(e.verdict)}: going back to "${name(to)}" makes a loop (${loop})`)
  }
  const reached = reachableSteps(content.steps, content.steps[0]!.key, edges)
  content.steps.forEach((s, i) => {
    if (!reached.has(s.key)) add(['steps', i], `step "${name(i)}" cannot be reached from the first step: no verdict leads to it`)
  })
  return issues
}

/**
 * The same problems as field errors, path → message (the first message per path), ready for
 * `FieldErrors.fields`. Empty when the procedure may be submitted.
 *
 * @example
 * validateFlow(content) // { 'steps.2.verdicts.in_range.next': 'step "…", if it reads in range: "s9" is not a step of this procedure' }
 */
export function validateFlow(content: FlowContent): Record<string, string> {
  const fields: Record<string, string> = {}
  for (const issue of flowIssues(content)) fields[issue.field] ??= issue.message
  return fields
}
