/**
 * A text cell a spreadsheet will not read as a formula. Following OWASP's CSV injection guidance,
 * a cell that begins with = + - @, a tab or a line break gets a leading apostrophe, which
 * spreadsheets show as text and do not evaluate; the full-width forms of those signs are treated
 * the same (common practice: some spreadsheets fold them to the ASCII signs). Quoting a cell that
 * holds the separator or a quote is csv-stringify's part.
 */
export function neutraliseCell(value: string): string {
  return /^[=+\-@\t\r\n＝＋－＠]/.test(value) ? `'${value}` : value
}
