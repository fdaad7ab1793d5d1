import type { FlowGraph } from '#shared/utils/diagnosis/flow-graph'
import { flowGraphKey, layoutFlow, type FlowLayout } from '~/utils/flowLayout'

/**
 * The layout of a flow for a server-rendered page: computed while the page renders and sent with
 * it, so the browser draws (and prints) the diagram without loading the layout package. When the
 * graph changes in the browser, the package is loaded then.
 */
export async function useFlowLayout(graph: () => FlowGraph | null) {
  const key = computed(() => {
    const g = graph()
    return g && g.isFlow ? `flow-layout-${flowGraphKey(g)}` : 'flow-layout-none'
  })
  const { data } = await useAsyncData(key, async () => {
    const g = graph()
    if (!g || !g.isFlow) return null
    return layoutFlow(await import('@dagrejs/dagre'), g)
  }, { dedupe: 'defer' })
  return computed<FlowLayout | null>(() => data.value ?? null)
}

/**
 * The layout of a flow that changes as it is written (the editor's preview): computed in the
 * browser after each change settles, the layout package loaded on first use.
 */
export function useLiveFlowLayout(graph: () => FlowGraph | null, delayMs = 250) {
  const layout = shallowRef<FlowLayout | null>(null)
  let dagre: typeof import('@dagrejs/dagre') | null = null
  let timer: ReturnType<typeof setTimeout> | undefined
  async function update() {
    const g = graph()
    if (!g || !g.isFlow || g.nodes.length === 0) {
      layout.value = null
      return
    }
    dagre ??= await import('@dagrejs/dagre')
    layout.value = layoutFlow(dagre, g)
  }
  if (import.meta.client) {
    const key = () => {
      const g = graph()
      return g ? flowGraphKey(g) : ''
    }
    watch(key, () => {
      clearTimeout(timer)
      timer = setTimeout(() => void update(), layout.value ? delayMs : 0)
    }, { immediate: true })
    onScopeDispose(() => clearTimeout(timer))
  }
  return layout
}
