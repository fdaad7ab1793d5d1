export { QUANTITY_LABELS } from '#shared/types/quantities'

/** Keeps a number with its unit (and a limit sign with its number) on one line, as SI asks. */
export function bindUnits(text: string): string {
  return text.replace(/([\d≤≥±]) (?=[^\s–])/g, '$1\u00A0')
}
