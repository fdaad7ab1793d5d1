import { ref, toValue, watch, type MaybeRefOrGetter } from 'vue'

type Render = (markdown: string) => string

// One renderer for the whole tab: DOMPurify hooks are global to its instance, and markdown-it
// is not small. It is created in the browser only, so no request on the server shares it.
let renderer: Promise<Render> | null = null

function loadRenderer(): Promise<Render> {
  renderer ??= Promise.all([import('dompurify'), import('#shared/utils/markdown')]).then(
    ([{ default: DOMPurify }, { createMarkdownRenderer }]) => createMarkdownRenderer(DOMPurify),
  )
  return renderer
}

/**
 * Live preview of Markdown as readers will see it: the same markdown-it settings and DOMPurify
 * allow-list as the server's `rendered` fields. Renders only in the browser, and only while
 * `enabled` is true (the preview tab is open), so typing in the editor costs nothing.
 */
export function useMarkdownPreview(source: MaybeRefOrGetter<string>, enabled: MaybeRefOrGetter<boolean> = true) {
  const html = ref('')
  const pending = ref(false)
  let turn = 0

  async function render() {
    if (!import.meta.client || !toValue(enabled)) return
    const mine = ++turn
    pending.value = true
    try {
      const run = await loadRenderer()
      if (mine === turn) html.value = run(toValue(source) ?? '')
    }
    finally {
      if (mine === turn) pending.value = false
    }
  }

  watch(() => [toValue(source), toValue(enabled)] as const, () => void render(), { immediate: true })

  return { html, pending }
}
