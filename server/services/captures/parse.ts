/**
 * Streaming parser for scope and logger exports (CSV: time, voltage, optional current).
 *
 * The bytes are decoded as they arrive (UTF-8, or UTF-16 in either byte order) and each record
 * is written straight into growing Float64Arrays; no array of row objects is ever built. The
 * first 64 KB are looked at once beforehand to pick the encoding, the delimiter (tab, semicolon or
 * comma, judged on the lines that start with a number) and whether numbers use a decimal comma.
 *
 * Two CSV packages do the splitting. Instrument exports almost never quote a field: then the
 * prologue is split line by line and the data rows go through uDSV's incremental parser, about
 * eight times faster than csv-parse on a 1M-row export (npm run bench:captures). A file with a
 * quote anywhere in its first 64 KB goes through csv-parse, which handles quoting in full.
 *
 * Everything before the first data row is the prologue: instrument metadata (`csv/metadata.ts`),
 * a header row naming the columns (units may sit inside: "time (ms)", "U [mV]", "t/us") and a
 * unit row ("s,V,A", "ms,mV,mA"). The columns are planned from those (`csv/columns.ts`); the
 * rows go into typed arrays, over-range and empty cells counted (`csv/sink.ts`). Every refusal is
 * a `CaptureFormatError` whose message says what to change in the export.
 */
import { once } from 'node:events'
import { parse as csvParse } from 'csv-parse'
import { initParser } from 'udsv'
import { CaptureSink } from './csv/sink'
import { detectEncoding, looksBinary, sniffFormat, TextDecoderStream, toBuffer } from './csv/text'
import { CaptureFormatError, MAX_CAPTURE_SAMPLES, type CsvDelimiter, type ParseCaptureOptions, type ParsedCapture } from './csv/types'

export { describeSkipped } from './csv/sink'
export { sniffFormat } from './csv/text'
export * from './csv/types'

const SNIFF_BYTES = 64 * 1024

/** The decoded text of the upload, piece by piece after the head. */
type More = () => Promise<string | null>

export async function parseCaptureCsv(
  source: AsyncIterable<Buffer | string | Uint8Array> | NodeJS.ReadableStream,
  options: ParseCaptureOptions = {},
): Promise<ParsedCapture> {
  const maxSamples = options.maxSamples ?? MAX_CAPTURE_SAMPLES
  const tolerance = options.badRowTolerance ?? 0.01
  const iterator = (source as AsyncIterable<Buffer | string | Uint8Array>)[Symbol.asyncIterator]()
  try {
    // Enough of the start to judge the format; it is then fed to the parser like the rest.
    const head: Buffer[] = []
    let headBytes = 0
    let exhausted = false
    while (headBytes < SNIFF_BYTES) {
      const next = await iterator.next()
      if (next.done) {
        exhausted = true
        break
      }
      const chunk = toBuffer(next.value)
      head.push(chunk)
      headBytes += chunk.length
    }
    const bytes = Buffer.concat(head)
    const { encoding, bom } = detectEncoding(bytes)
    const decoder = new TextDecoderStream(encoding)
    let text = decoder.write(bytes.subarray(bom))
    let done = exhausted
    if (done) text += decoder.end()
    if (done && text.trim() === '') throw new CaptureFormatError('EMPTY_FILE', 'the file is empty: export the capture again')
    if (looksBinary(text.slice(0, SNIFF_BYTES))) {
      throw new CaptureFormatError('NOT_TEXT', 'the file is not a text export: save the capture from the instrument as CSV (values separated by commas, semicolons or tabs)')
    }
    const { delimiter, decimalComma } = sniffFormat(text.slice(0, SNIFF_BYTES))
    const more: More = async () => {
      if (done) return null
      const next = await iterator.next()
      if (next.done) {
        done = true
        return decoder.end() || null
      }
      return decoder.write(toBuffer(next.value))
    }
    const sink = new CaptureSink({ delimiter, decimalComma, encoding, maxSamples, ...(options.columns ? { choice: options.columns } : {}) })
    return text.includes('"')
      ? await parseQuoted(text, more, sink, delimiter, tolerance)
      : await parseUnquoted(text, more, sink, delimiter, tolerance)
  }
  catch (error) {
    await iterator.return?.()
    throw error
  }
}

/** Quotes are rare in instrument exports; csv-parse reads them in full, relaxed so a stray one does not fail a file. */
async function parseQuoted(text: string, more: More, sink: CaptureSink, delimiter: CsvDelimiter, tolerance: number): Promise<ParsedCapture> {
  const parser = csvParse({ delimiter, relax_column_count: true, relax_quotes: true, skip_empty_lines: true })
  let failure: unknown = null
  parser.on('readable', () => {
    try {
      let record: string[] | null
      while ((record = parser.read() as string[] | null) !== null) sink.record(record)
    }
    catch (error) {
      failure = error
      parser.destroy()
    }
  })
  const finished = new Promise<void>((resolve, reject) => {
    parser.on('end', resolve)
    parser.on('error', reject)
    parser.on('close', resolve)
  })
  // Rejections are collected below; this keeps an early one from counting as unhandled.
  finished.catch(() => undefined)
  const write = async (chunk: string): Promise<void> => {
    if (!parser.write(chunk)) await Promise.race([once(parser, 'drain'), finished])
  }
  try {
    let chunk: string | null = text
    while (chunk !== null && failure === null && !parser.destroyed) {
      if (chunk !== '') await write(chunk)
      chunk = await more()
    }
    if (failure === null && !parser.destroyed) parser.end()
    await finished
  }
  catch (error) {
    if (failure === null) failure = error
  }
  if (failure !== null) {
    if (failure instanceof CaptureFormatError) throw failure
    const code = (failure as { code?: unknown }).code
    if (typeof code === 'string' && code.startsWith('CSV_')) {
      throw new CaptureFormatError('MALFORMED_CSV', `the file is not valid CSV: ${(failure as Error).message}; export it again without editing it by hand`)
    }
    throw failure
  }
  return sink.finish(tolerance)
}

/**
 * The common case: no quotes. The prologue and the rows the columns are planned from are split
 * line by line; the rest goes through uDSV with the column count of the first data row. Rows end
 * at "\n" (a "\r" before it is whitespace to Number()), or at "\r" in files that have no "\n".
 */
async function parseUnquoted(text: string, more: More, sink: CaptureSink, delimiter: CsvDelimiter, tolerance: number): Promise<ParsedCapture> {
  const rowEnd = !text.includes('\n') && text.includes('\r') ? '\r' : '\n'
  let pos = 0
  while (!sink.planned) {
    let end = text.indexOf(rowEnd, pos)
    if (end < 0) {
      const chunk = await more()
      if (chunk !== null) {
        text = text.slice(pos) + chunk
        pos = 0
        continue
      }
      if (pos >= text.length) break
      end = text.length
    }
    const line = text.slice(pos, end)
    pos = end + 1
    if (line.trim() !== '') sink.record(line.replace(/\r$/, '').split(delimiter))
  }
  if (!sink.planned) return sink.finish(tolerance)

  // A row with fewer fields than the first one runs on into the next line (uDSV reads a fixed
  // number of columns); such a row is split again here, so no row is lost.
  const cols = Array.from({ length: sink.dataFields }, (_, k) => ({ name: `c${k}`, type: 's' as const, repl: { empty: '', null: undefined, NaN: undefined } }))
  const parser = initParser({ col: delimiter, row: rowEnd, encl: '', esc: '', trim: false, cols })
  const onRow = (row: string[]): void => {
    for (let k = 0; k < row.length; k++) {
      if (row[k]!.includes(rowEnd)) {
        for (const line of row.join(delimiter).split(rowEnd)) if (line.trim() !== '') sink.record(line.replace(/\r$/, '').split(delimiter))
        return
      }
    }
    if (row.length > 1 || row[0]!.trim() !== '') sink.record(row)
  }
  let fed = false
  let chunk: string | null = text.slice(pos)
  while (chunk !== null) {
    if (chunk !== '') {
      parser.chunk<string[]>(chunk, parser.stringArrs, onRow)
      fed = true
    }
    chunk = await more()
  }
  // uDSV has nothing to flush (and no parse state) until it has been given a chunk.
  if (fed) parser.end()
  return sink.finish(tolerance)
}
