import { computed } from 'vue'
import { useProcedureDraftStore } from '~/stores/procedureDraft'
import { focusFieldSoon, focusMovedItem } from '~/utils/listFocus'

/**
 * The draft's causes or steps as the editor lists them: adding one puts the keyboard in its
 * name, moving one keeps the keyboard on its move buttons.
 */
export function useDraftList(kind: 'cause' | 'step') {
  const draft = useProcedureDraftStore()
  const items = computed<Array<{ key: string }>>(() => (kind === 'cause' ? draft.content.causes : draft.content.steps))
  const path = kind === 'cause' ? { list: 'causes', name: 'name' } : { list: 'steps', name: 'title' }

  function add() {
    if (kind === 'cause') draft.addCause()
    else draft.addStep()
    void focusFieldSoon(`${path.list}.${items.value.length - 1}.${path.name}`)
  }

  function move(from: number, to: number) {
    if (kind === 'cause') draft.moveCause(from, to)
    else draft.moveStep(from, to)
    void focusMovedItem(`${kind}-tools-${items.value[to]?.key}`, from, to)
  }

  return { draft, add, move }
}
