import { nextTick } from 'vue'
import { fieldId } from './procedureDraft'

// Keyboard focus in the editor's ordered lists: a new item's first input takes it, and an item
// that moved keeps it on its move buttons.

/** Focuses the input of a field path once the form shows it. */
export async function focusFieldSoon(path: string): Promise<void> {
  await nextTick()
  document.getElementById(fieldId(path))?.focus()
}

/** After a move, focuses the moved item's arrow in the direction it went; at either end the other arrow is the live one. */
export async function focusMovedItem(toolsTestId: string, from: number, to: number): Promise<void> {
  await nextTick()
  const base = `[data-testid="${toolsTestId}`
  const first = document.querySelector<HTMLButtonElement>(`${base}-${to < from ? 'up' : 'down'}"]`)
  const other = document.querySelector<HTMLButtonElement>(`${base}-${to < from ? 'down' : 'up'}"]`)
  ;(first && !first.disabled ? first : other)?.focus()
}
