import { PassThrough, Readable } from 'node:stream'
import { describe, expect, it } from 'vitest'
import { CaptureFormatError, parseCaptureCsv, sniffFormat, type ParsedCapture } from '../../server/services/captures/parse'
import { analyseWaveform } from '../../shared/utils/waveform/analyse'
import { captureToCsv, synthesiseCapture, type CsvOptions } from '../../shared/utils/waveform/synth'

/** Feeds the text in small pieces, so rows and numbers are split across chunks as on a real upload. */
function chunked(text: string, size = 13): Readable {
  const buffer = Buffer.from(text, 'utf8')
  const pieces: Buffer[] = []
  for (let o = 0; o < buffer.length; o += size) pieces.push(buffer.subarray(o, o + size))
  return Readable.from(pieces)
}

async function parse(text: string, options = {}): Promise<ParsedCapture> {
  return parseCaptureCsv(chunked(text), options)
}

async function parseError(text: string, options = {}): Promise<CaptureFormatError> {
  try {
    await parse(text, options)
  }
  catch (error) {
    expect(error).toBeInstanceOf(CaptureFormatError)
    return error as CaptureFormatError
  }
  throw new Error('expected the capture to be refused')
}

describe('parseCaptureCsv: delimiters and number formats (RFC 4180 structure; decimal comma as common practice)', () => {
  const rows = [
    [0, 1.5, 0.01],
    [0.0001, -2.25, -0.02],
    [0.0002, 3, 0.03],
  ]
  it.each([
    [',', 'comma'],
    [';', 'semicolon'],
    ['\t', 'tab'],
  ])('reads %j (%s) separated rows into typed arrays', async (delimiter) => {
    const text = ['time,voltage,current'.replaceAll(',', delimiter), ...rows.map(r => r.join(delimiter))].join('\n')
    const r = await parse(text)
    expect(r.t).toBeInstanceOf(Float64Array)
    expect(Array.from(r.t)).toEqual([0, 0.0001, 0.0002])
    expect(Array.from(r.v)).toEqual([1.5, -2.25, 3])
    expect(Array.from(r.i!)).toEqual([0.01, -0.02, 0.03])
    expect(r.meta.delimiter).toBe(delimiter)
    expect(r.meta.decimalComma).toBe(false)
    expect(r.meta.headerRows).toBe(1)
  })

  it.each([';', '\t'])('reads a decimal comma with %j as the delimiter', async (delimiter) => {
    const text = `Zeit${delimiter}Spannung\n0,0000${delimiter}1,5\n0,0125${delimiter}-2,25\n0,0250${delimiter}3,125\n`
    const r = await parse(text)
    expect(r.meta.decimalComma).toBe(true)
    expect(Array.from(r.t)).toEqual([0, 0.0125, 0.025])
    expect(Array.from(r.v)).toEqual([1.5, -2.25, 3.125])
    expect(r.i).toBeUndefined()
  })

  it('sniffs the format from the numeric lines, not the metadata above them', () => {
    expect(sniffFormat('Model;X1\nSample interval;1e-5\n0.1,2\n0.2,3\n')).toEqual({ delimiter: ',', decimalComma: false })
    expect(sniffFormat('a,b,c\n0,1;2,5\n0,2;3,5\n')).toEqual({ delimiter: ';', decimalComma: true })
    expect(sniffFormat('t\tv\n1.5\t2\n')).toEqual({ delimiter: '\t', decimalComma: false })
  })

  it('accepts exponents, CRLF line ends, a UTF-8 byte-order mark and blank lines', async () => {
    const r = await parse('\uFEFFtime,voltage\r\n\r\n-1.0e-03,3.25E+02\r\n0.0E+00,-3.25e2\r\n\r\n1e-3,0\r\n')
    expect(Array.from(r.t)).toEqual([-0.001, 0, 0.001])
    expect(Array.from(r.v)).toEqual([325, -325, 0])
  })
})

describe('parseCaptureCsv: header and unit rows (SI prefixes, BIPM SI Brochure 9th ed.)', () => {
  it('applies a unit row of ms, mV and mA', async () => {
    const r = await parse('time,voltage,current\nms,mV,mA\n0,325000,1500\n0.5,-162500,-750\n1,0,0\n')
    expect(Array.from(r.t)).toEqual([0, 0.0005, 0.001])
    expect(Array.from(r.v)).toEqual([325, -162.5, 0])
    expect(Array.from(r.i!)).toEqual([1.5, -0.75, 0])
    expect(r.meta.units).toEqual({ time: 'ms', voltage: 'mV', current: 'mA' })
    expect(r.meta.headerRows).toBe(2)
  })

  it('applies µs (either micro sign, or us) and kV', async () => {
    for (const micro of ['µs', 'μs', 'us']) {
      const r = await parse(`t,u\n${micro},kV\n0,0.325\n10,-0.325\n20,0.1\n`)
      expect(Array.from(r.t)).toEqual([0, 1e-5, 2e-5])
      expect(Array.from(r.v)).toEqual([325, -325, 100])
      expect(r.meta.units).toEqual({ time: 'us', voltage: 'kV' })
    }
  })

  it('reads units written inside the header: "time (ms)", "U [mV]", "I/mA"', async () => {
    const r = await parse('time (ms)\tU [mV]\tI/mA\n0\t1000\t250\n2\t-1000\t-250\n4\t500\t125\n')
    expect(Array.from(r.t)).toEqual([0, 0.002, 0.004])
    expect(Array.from(r.v)).toEqual([1, -1, 0.5])
    expect(Array.from(r.i!)).toEqual([0.25, -0.25, 0.125])
    expect(r.meta.columns).toEqual({ time: { index: 0, name: 'time' }, voltage: { index: 1, name: 'U' }, current: { index: 2, name: 'I' } })
  })

  it('finds current by its header even when it is not the third column', async () => {
    const r = await parse('Time,Current,Voltage\n0,1,230\n0.001,2,231\n0.002,3,232\n')
    expect(r.meta.columns.voltage.index).toBe(2)
    expect(r.meta.columns.current!.index).toBe(1)
    expect(Array.from(r.v)).toEqual([230, 231, 232])
    expect(Array.from(r.i!)).toEqual([1, 2, 3])
  })

  it('asks which column is which when a channel has neither a unit nor a telling name, then reads the choice', async () => {
    const text = 'Time,CH1,CH2\n0,1,0.1\n0.001,2,0.2\n0.002,3,0.3\n'
    const e = await parseError(text)
    expect(e.code).toBe('AMBIGUOUS_COLUMNS')
    expect(e.message).toMatch(/does not say what "CH2" holds/)
    expect(e.columns).toEqual([
      { index: 0, name: 'Time', unit: null, quantity: 'time', asVoltage: false, asCurrent: false, sample: '0' },
      { index: 1, name: 'CH1', unit: null, quantity: 'voltage', asVoltage: true, asCurrent: false, sample: '1' },
      { index: 2, name: 'CH2', unit: null, quantity: 'unknown', asVoltage: true, asCurrent: true, sample: '0.1' },
    ])
    const r = await parse(text, { columns: { voltage: 1, current: 2 } })
    expect(r.meta.columns.current).toEqual({ index: 2, name: 'CH2' })
    expect(Array.from(r.i!)).toEqual([0.1, 0.2, 0.3])
  })

  it('never takes a column in volts for the current: two voltage channels are a choice of which is the load', async () => {
    const text = 'Time,CH1,CH2\ns,V,V\n0,1,5\n0.001,2,6\n0.002,3,7\n'
    const e = await parseError(text)
    expect(e.code).toBe('AMBIGUOUS_COLUMNS')
    expect(e.columns!.filter(c => c.asCurrent)).toEqual([])
    expect(e.columns!.filter(c => c.asVoltage).map(c => c.name)).toEqual(['CH1', 'CH2'])
    const r = await parse(text, { columns: { voltage: 2, current: null } })
    expect(Array.from(r.v)).toEqual([5, 6, 7])
    expect(r.i).toBeUndefined()
    const wrong = await parseError(text, { columns: { voltage: 1, current: 2 } })
    expect(wrong.code).toBe('BAD_COLUMN_CHOICE')
    expect(wrong.field).toBe('currentColumn')
  })

  it('reads a file with no header at all: time, voltage, current by position', async () => {
    const r = await parse('0,1,0.1\n0.001,2,0.2\n0.002,3,0.3\n')
    expect(r.meta.headerRows).toBe(0)
    expect(Array.from(r.i!)).toEqual([0.1, 0.2, 0.3])
  })
})

describe('parseCaptureCsv: instrument exports', () => {
  it('skips leading metadata lines of a scope export and uses its units', async () => {
    const text = [
      'Model,BENCH-SCOPE 4',
      'Firmware Version,1.02',
      'Waveform Type,ANALOG',
      'Horizontal Units,ms',
      'Vertical Units,V',
      'Sample Interval,0.01',
      'Record Length,4',
      '',
      'Labels,,',
      'TIME,CH1,CH2',
      '-0.01,0.5,0.001',
      '0,0.6,0.002',
      '0.01,0.7,0.003',
      '0.02,0.8,0.004',
    ].join('\n')
    // Two channels in the vertical unit: the technician says CH1 is the load voltage.
    const r = await parse(text, { columns: { voltage: 1, current: null } })
    expect(r.meta.headerRows).toBe(9)
    expect(r.meta.units.time).toBe('ms')
    expect(Array.from(r.t)).toEqual([-0.00001, 0, 0.00001, 0.00002])
    expect(Array.from(r.v)).toEqual([0.5, 0.6, 0.7, 0.8])
    expect(r.meta.columns.time.name).toBe('TIME')
  })

  it('turns a sample-index column into time from the start and increment given above it', async () => {
    const text = 'X,CH1,Start,Increment,\nSequence,Volt,-6.000000e-03,2.000000e-06,\n0,1.20e-01,,\n1,1.30e-01,,\n2,1.40e-01,,\n'
    const r = await parse(text)
    expect(r.meta.timeSource).toBe('sample_interval')
    expect(r.meta.sampleIntervalS).toBe(2e-6)
    expect(r.t[0]).toBeCloseTo(-0.006, 15)
    expect(r.t[2]! - r.t[0]!).toBeCloseTo(4e-6, 15)
    expect(Array.from(r.v)).toEqual([0.12, 0.13, 0.14])
  })

  it('turns a lone column of readings into a capture from a stated sample rate', async () => {
    const r = await parse('Sample rate,10 kS/s\nStart,0.5\nvoltage\n1\n2\n3\n')
    expect(r.meta.columns.time.index).toBeNull()
    expect(Array.from(r.t)).toEqual([0.5, 0.5001, 0.5002])
    expect(Array.from(r.v)).toEqual([1, 2, 3])
  })

  it('reads a Node stream (PassThrough) and Buffers as well as strings', async () => {
    const stream = new PassThrough()
    const done = parseCaptureCsv(stream)
    stream.write('time,volt')
    stream.write(Buffer.from('age\n0,1\n0.00'))
    stream.end('1,2\n0.002,3\n')
    const r = await done
    expect(Array.from(r.v)).toEqual([1, 2, 3])
  })
})

describe('parseCaptureCsv: errors, each with its code (mapped to HTTP 422)', () => {
  it('EMPTY_FILE for no bytes or only blank lines', async () => {
    expect((await parseError('')).code).toBe('EMPTY_FILE')
    expect((await parseError('\n\n  \r\n')).code).toBe('EMPTY_FILE')
  })

  it('NO_NUMERIC_COLUMNS for text only, a header only, or a single column with no sample interval', async () => {
    expect((await parseError('hello,world\nfoo,bar\n')).code).toBe('NO_NUMERIC_COLUMNS')
    expect((await parseError('time,voltage\n')).code).toBe('NO_NUMERIC_COLUMNS')
    const lone = await parseError('voltage\n1\n2\n3\n')
    expect(lone.code).toBe('NO_NUMERIC_COLUMNS')
    expect(lone.message).toMatch(/only one numeric column/)
    expect((await parseError('hello,world\n')).message).toMatch(/no numeric columns/)
  })

  it('TIME_NOT_INCREASING names the row', async () => {
    const e = await parseError('time,voltage\n0,1\n0.001,2\n0.001,3\n0.003,4\n')
    expect(e.code).toBe('TIME_NOT_INCREASING')
    expect(e.row).toBe(4)
    expect(e.message).toMatch(/row 4/)
  })

  it('drops up to 1 % of unreadable rows and counts them; TOO_MANY_BAD_ROWS beyond', async () => {
    const good = Array.from({ length: 200 }, (_, k) => `${k / 1000},${k}`)
    const withTwoBad = ['time,voltage', ...good.slice(0, 100), 'oops,1', '0.1005,NaN', ...good.slice(101)].join('\n')
    const r = await parse(withTwoBad)
    expect(r.meta.droppedRows).toBe(2)
    expect(r.t.length).toBe(199)
    const withThreeBad = ['time,voltage', ...good.slice(0, 100), 'oops,1', '0.1005,NaN', ',', ...good.slice(101, 200)].join('\n')
    const e = await parseError(withThreeBad)
    expect(e.code).toBe('TOO_MANY_BAD_ROWS')
    expect(e.message).toMatch(/3 of 202/)
  })

  it('TOO_MANY_SAMPLES past maxSamples (2 000 000 by default)', async () => {
    const text = ['time,voltage', ...Array.from({ length: 101 }, (_, k) => `${k},${k}`)].join('\n')
    expect((await parseError(text, { maxSamples: 100 })).code).toBe('TOO_MANY_SAMPLES')
    expect((await parse(text, { maxSamples: 101 })).t.length).toBe(101)
  })

  it('MALFORMED_CSV for a quote left open (RFC 4180)', async () => {
    expect((await parseError('time,voltage\n"0,1\n0.001,2\n')).code).toBe('MALFORMED_CSV')
  })
})

describe('parseCaptureCsv: round trip with captureToCsv', () => {
  const capture = synthesiseCapture({ vrms: 230, cut: 'trailing_edge', conductionAngleDeg: 120, load: { resistanceOhm: 100 }, sampleRateHz: 20_000, cycles: 5.25, startPhaseDeg: 30, noiseVrms: 0.5 })
  const cases: Array<[string, CsvOptions]> = [
    ['comma, seconds, volts', {}],
    ['semicolon, decimal comma, ms, mV, mA, unit row', { delimiter: ';', decimalComma: true, timeUnit: 'ms', voltageUnit: 'mV', currentUnit: 'mA', withUnitRow: true }],
    ['tab, µs, kV, units in the header, CRLF', { delimiter: '\t', timeUnit: 'µs', voltageUnit: 'kV', unitsInHeader: true, lineEnding: '\r\n' }],
    ['scope metadata above the header', { metadata: [['Model', 'BENCH-SCOPE 4'], ['Sample Interval', '5e-05']], withUnitRow: true }],
  ]
  it.each(cases)('%s', async (_label, options) => {
    const r = await parseCaptureCsv(chunked(captureToCsv(capture, options), 4096))
    expect(r.t.length).toBe(capture.t.length)
    for (let k = 0; k < capture.t.length; k++) {
      expect(Math.abs(r.t[k]! - capture.t[k]!)).toBeLessThanOrEqual(1e-15 * Math.max(1, Math.abs(capture.t[k]!)) + 1e-18)
      expect(Math.abs(r.v[k]! - capture.v[k]!)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(capture.v[k]!)))
      expect(Math.abs(r.i![k]! - capture.i![k]!)).toBeLessThanOrEqual(1e-12)
    }
    const original = analyseWaveform(capture).features
    const parsed = analyseWaveform(r).features
    expect(parsed.vrms).toBeCloseTo(original.vrms, 6)
    expect(parsed.cutType).toBe(original.cutType)
    expect(parsed.conductionAngleDeg.positive).toBeCloseTo(original.conductionAngleDeg.positive, 6)
  })

  it('keeps fewer digits when asked, and the analysis still agrees to that precision', async () => {
    const r = await parseCaptureCsv(chunked(captureToCsv(capture, { digits: 7 }), 4096))
    expect(analyseWaveform(r).features.vrms).toBeCloseTo(analyseWaveform(capture).features.vrms, 3)
  })
})

describe('parseCaptureCsv: the unquoted fast path and the quoted path agree', () => {
  // The same synthetic export (invented test data), once plain and once with a quoted header
  // name, which sends it through csv-parse instead of uDSV; and with rows that break the
  // fixed column count uDSV reads (a short row, blank lines, CRLF endings).
  const capture = synthesiseCapture({ cut: 'trailing_edge', conductionAngleDeg: 120, sampleRateHz: 10_000, cycles: 4, load: { resistanceOhm: 100 }, noiseVrms: 0.2, seed: 7 })
  const plain = captureToCsv(capture, { digits: 9 })
  const quoted = plain.replace(/^time,/, '"time",')

  it.each([1, 7, 4096])('gives the same samples in %i-byte chunks', async (size) => {
    const a = await parseCaptureCsv(chunked(plain, size))
    const b = await parseCaptureCsv(chunked(quoted, size))
    expect(a.t.length).toBe(capture.t.length)
    expect(Array.from(a.t)).toEqual(Array.from(b.t))
    expect(Array.from(a.v)).toEqual(Array.from(b.v))
    expect(Array.from(a.i!)).toEqual(Array.from(b.i!))
  })

  it('drops a short row without losing the row after it, and skips blank lines, with CRLF endings', async () => {
    const text = 'time,voltage,current\r\n0,1,0.1\r\n0.001,2\r\n\r\n0.002,3,0.3\r\n0.003,4,0.4\r\n'
    for (const variant of [text, text.replace('time', '"time"')]) {
      const r = await parse(variant, { badRowTolerance: 0.5 })
      expect(Array.from(r.t)).toEqual([0, 0.002, 0.003])
      expect(Array.from(r.i!)).toEqual([0.1, 0.3, 0.4])
      expect(r.meta.droppedRows).toBe(1)
    }
  })
})
