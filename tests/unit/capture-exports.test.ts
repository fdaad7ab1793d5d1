import { Readable } from 'node:stream'
import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { CaptureFormatError, parseCaptureCsv, type ParseCaptureOptions, type ParsedCapture } from '../../server/services/captures/parse'
import { analyseWaveform, WaveformError } from '../../shared/utils/waveform/analyse'
import { synthesiseCapture } from '../../shared/utils/waveform/synth'
import { arbitraryUpload, isoStamp, utf16be, utf16le, writeExport } from '../helpers/exports'

// Scope and logger exports as technicians bring them (invented formats with the traits listed in
// the product's references: metadata blocks, units in the header or their own row, decimal
// commas, index columns, date-time stamps, over-range cells, extra channels, UTF-16, CR line
// ends), all of one capture: a leading-edge dimmer at α = 90° on 230 V, 50 Hz into 50 Ω.
// Each is read and analysed and its figures checked against the closed forms below, or its
// refusal checked word for word.

const R = 50
const VPK = 230 * Math.SQRT2 // √2 × RMS (definition)
// Leading-edge phase control at α = 90°: Vrms/Vpk = √[(π − α + ½ sin 2α)/(2π)] = 0.5 (Rashid,
// Power Electronics 4th ed., ch. 11, table value).
const VRMS = VPK * 0.5
const IRMS = VRMS / R // Ohm's law on a resistive load
const POWER = VRMS ** 2 / R // P = V²/R (definition)

// Edges fall midway between samples (half a sample = 0.45° at 20 kS/s), as on a real scope.
const capture = synthesiseCapture({ vrms: 230, frequencyHz: 50, sampleRateHz: 20_000, cycles: 10, cut: 'leading_edge', firingAngleDeg: 90, load: { resistanceOhm: R }, startPhaseDeg: 0.45 })
const n = capture.t.length
/** Every 173rd row: 23 of 4000, 0.6 %, scattered over the cycle (not only at the peaks). */
const scattered = (k: number) => k % 173 === 50
const clipped = (k: number) => Math.abs(capture.v[k]!) > 0.7 * VPK

type Expect
  = | { figures: { current: boolean, tolerance?: number, skipped?: { count: number, overRange?: number, empty?: number } } }
    | { refusal: { code: string, message: RegExp, row?: number, choices?: { voltage: string[], current: string[] } } }

interface Variant { label: string, bytes: string | Buffer, options?: ParseCaptureOptions, expect: Expect }

const variants: Variant[] = [
  {
    label: 'comma separated, units in parentheses in the header, seconds',
    bytes: writeExport(capture, { header: ['Time (s)', 'Load voltage (V)', 'Load current (A)'] }),
    expect: { figures: { current: true } },
  },
  {
    label: 'semicolons, decimal commas, units in their own row (ms; V; A)',
    bytes: writeExport(capture, { delimiter: ';', decimalComma: true, header: ['Zeit', 'Spannung', 'Strom'], unitRow: ['ms', 'V', 'A'], timeScale: 1e3 }),
    expect: { figures: { current: true } },
  },
  {
    label: 'tabs, decimal commas, units in brackets [ms] [mV] [mA], CRLF',
    bytes: writeExport(capture, { delimiter: '\t', decimalComma: true, eol: '\r\n', header: ['t [ms]', 'U [mV]', 'I [mA]'], timeScale: 1e3, voltageScale: 1e3, currentScale: 1e3 }),
    expect: { figures: { current: true } },
  },
  {
    label: 'a key,value metadata block (interval with its unit in the next cell), an index column',
    bytes: writeExport(capture, {
      before: ['Instrument,BENCH LOGGER 2', 'Sample interval,50,us', 'Vertical units,V', 'Channels,2', ''],
      header: ['Point', 'CH A', 'CH B (A)'],
      // CH A has no unit of its own: the one channel beside the current, in the vertical unit.
      time: k => String(k),
    }),
    expect: { figures: { current: true } },
  },
  {
    label: 'a "key: value" block giving the sample rate (50 kHz form), a Sample index column',
    bytes: writeExport(capture, {
      before: ['Export: waveform', 'Sample rate: 20 kHz', 'Trigger: CH1 rising'],
      header: ['Sample', 'CH1 (V)', 'CH2 (A)'],
      time: k => String(k),
    }),
    expect: { figures: { current: true } },
  },
  {
    label: 'an index column with the rate in its header',
    bytes: writeExport(capture, { delimiter: ';', header: ['Sample (20 kS/s)', 'U [V]', 'I [A]'], time: k => String(k) }),
    expect: { figures: { current: true } },
  },
  {
    label: 'Sample interval: 50 us (colon form) over a lone voltage column',
    bytes: writeExport(capture, { before: ['Sample interval: 50 us'], header: ['Voltage (V)'], withCurrent: false, time: () => '', edit: (_k, cells) => cells.slice(1) }),
    expect: { figures: { current: false } },
  },
  {
    label: 'ISO 8601 date-time stamps to the microsecond',
    bytes: writeExport(capture, { header: ['Timestamp', 'Voltage (V)', 'Current (A)'], time: (_k, t) => isoStamp(t) }),
    expect: { figures: { current: true } },
  },
  {
    label: 'comma separated with every cell quoted and decimal commas inside the quotes',
    bytes: writeExport(capture, { quoteAll: true, decimalComma: true, header: ['Time (s)', 'Voltage (V)', 'Current (A)'] }),
    expect: { figures: { current: true } },
  },
  {
    label: 'scientific notation, negative times before the trigger, a UTF-8 byte-order mark',
    bytes: `\uFEFF${writeExport(capture, { header: ['TIME', 'VOLT', 'AMP'], unitRow: ['s', 'V', 'A'], time: (_k, t) => (t - 0.1).toExponential(8) })}`,
    expect: { figures: { current: true } },
  },
  {
    label: 'voltage in mV with an over-range cell (∞) in the first data row',
    bytes: writeExport(capture, { header: ['Time (s)', 'CH1 (mV)'], withCurrent: false, voltageScale: 1e3, edit: (k, c) => (k === 0 ? [c[0]!, '∞'] : c) }),
    expect: { figures: { current: false, skipped: { count: 1, overRange: 1 } } },
  },
  {
    label: 'an empty current cell in the first data row',
    bytes: writeExport(capture, { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], edit: (k, c) => (k === 0 ? [c[0]!, c[1]!, ''] : c) }),
    expect: { figures: { current: true, skipped: { count: 1, empty: 1 } } },
  },
  {
    label: 'an over-range cell (OL) in the first data row of a file with a units row',
    bytes: writeExport(capture, { delimiter: ';', header: ['time', 'voltage', 'current'], unitRow: ['ms', 'V', 'A'], timeScale: 1e3, edit: (k, c) => (k === 0 ? [c[0]!, 'OL', c[2]!] : c) }),
    expect: { figures: { current: true, skipped: { count: 1, overRange: 1 } } },
  },
  {
    label: 'over-range cells scattered through the file (−∞, 9.9E37, empty), 0.6 % of the rows',
    bytes: writeExport(capture, { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], edit: (k, c) => (scattered(k) ? [c[0]!, ['-∞', '9.9E37', ''][k % 3]!, c[2]!] : c) }),
    expect: { figures: { current: true, tolerance: 3e-3, skipped: { count: 23 } } },
  },
  {
    label: 'UTF-16 (little-endian, with a byte-order mark), tab separated',
    bytes: utf16le(writeExport(capture, { delimiter: '\t', header: ['Time (s)', 'Voltage (V)', 'Current (A)'], eol: '\r\n' })),
    expect: { figures: { current: true } },
  },
  {
    label: 'UTF-16 big-endian without a byte-order mark',
    bytes: utf16be(writeExport(capture, { header: ['Time (s)', 'Voltage (V)', 'Current (A)'] }), false),
    expect: { figures: { current: true } },
  },
  {
    label: 'CR-only line ends',
    bytes: writeExport(capture, { eol: '\r', header: ['Time (s)', 'Voltage (V)', 'Current (A)'] }),
    expect: { figures: { current: true } },
  },
  {
    label: 'CR-only line ends with quoted headers (through the quoting parser)',
    bytes: writeExport(capture, { eol: '\r', header: ['"Time (s)"', '"Voltage (V)"', '"Current (A)"'] }),
    expect: { figures: { current: true } },
  },
  {
    label: 'two voltage channels and a math channel (W), the load voltage chosen',
    bytes: writeExport(capture, { header: ['Time (s)', 'CH1 (V)', 'CH2 (V)', 'MATH (W)'], withCurrent: false, extra: k => [String(+(VPK * Math.sin(2 * Math.PI * 50 * capture.t[k]! + 0.45 * Math.PI / 180)).toPrecision(9)), String(+(capture.v[k]! * capture.i![k]!).toPrecision(9))] }),
    options: { columns: { voltage: 1, current: null } },
    expect: { figures: { current: false } },
  },
  // Refusals, each naming what to change.
  {
    label: 'two voltage channels and a math channel (W), nothing chosen',
    bytes: writeExport(capture, { header: ['Time (s)', 'CH1 (V)', 'CH2 (V)', 'MATH (W)'], withCurrent: false, extra: k => [String(VPK * Math.sin(k)), String(k)] }),
    expect: { refusal: { code: 'AMBIGUOUS_COLUMNS', message: /^2 columns could be the voltage at the load \("CH1" \(V\), "CH2" \(V\)\); "MATH" \(W\) is neither: choose which column is the voltage at the load and which, if any, is the current$/, choices: { voltage: ['CH1', 'CH2'], current: [] } } },
  },
  {
    label: 'clipped peaks: the voltage over range on a third of the rows',
    bytes: writeExport(capture, { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], edit: (k, c) => (clipped(k) ? [c[0]!, '∞', c[2]!] : c) }),
    expect: { refusal: { code: 'TOO_MANY_BAD_ROWS', message: /^\d+ of 4000 data rows left out: \d+ with a cell over range \(∞, OL or 9\.9E37\) in "Voltage", at rows \d+–\d+, .*more than 1 % of the rows: the signal went past the instrument's range; set the vertical scale so the whole waveform fits on screen/ } },
  },
  {
    label: 'an index column and no sample rate anywhere',
    bytes: writeExport(capture, { header: ['Sample', 'CH1 (V)'], withCurrent: false, time: k => String(k) }),
    expect: { refusal: { code: 'NO_TIME_AXIS', message: /^"Sample" counts samples and states no sample rate or interval: keep the header lines with the sample rate in the export, or export a time column$/ } },
  },
  {
    label: 'a power column and no voltage',
    bytes: 'Time (s),P (W)\n0,1\n0.001,2\n0.002,3\n',
    expect: { refusal: { code: 'NO_NUMERIC_COLUMNS', message: /^only one numeric column in the file; a capture needs time and voltage/ } },
  },
  {
    label: 'a header and a single data row',
    bytes: 'Time (s),Voltage (V)\n0,1\n',
    expect: { refusal: { code: 'TOO_FEW_CYCLES', message: /^the capture has only 1 sample; at least two mains cycles are needed: export the whole record$/ } },
  },
  {
    label: 'a first row that is not numbers, then no data',
    bytes: 'Bench capture,voltage at the load\nsee the attached note\n',
    expect: { refusal: { code: 'NO_NUMERIC_COLUMNS', message: /^no numeric columns in the file: expected rows of time and voltage; export the waveform data as CSV/ } },
  },
  {
    label: 'a picture sent in place of the export',
    bytes: Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A, 0, 0, 0, 13, 0x49, 0x48, 0x44, 0x52, 0, 0, 1, 0]),
    expect: { refusal: { code: 'NOT_TEXT', message: /^the file is not a text export: save the capture from the instrument as CSV/ } },
  },
]

async function read(bytes: string | Buffer, options?: ParseCaptureOptions): Promise<ParsedCapture> {
  const buffer = typeof bytes === 'string' ? Buffer.from(bytes, 'utf8') : bytes
  // Chunks of an odd size, so characters and rows are split as on a real upload.
  const pieces: Buffer[] = []
  for (let o = 0; o < buffer.length; o += 4093) pieces.push(buffer.subarray(o, o + 4093))
  return await parseCaptureCsv(Readable.from(pieces), options)
}

/** The refusal, from the parser or from the analysis. */
async function refusal(bytes: string | Buffer, options?: ParseCaptureOptions): Promise<{ code: string, message: string, error: unknown }> {
  try {
    analyseWaveform(await read(bytes, options))
  }
  catch (error) {
    return { code: (error as { code: string }).code, message: (error as Error).message, error }
  }
  throw new Error('expected the export to be refused')
}

describe('capture exports: read right, with the figures of the closed forms', () => {
  it('the closed forms themselves (Rashid ch. 11 at α = 90°: Vrms/Vpk = 0.5)', () => {
    const a = Math.PI / 2
    expect(Math.sqrt((Math.PI - a + 0.5 * Math.sin(2 * a)) / (2 * Math.PI))).toBeCloseTo(0.5, 12)
    expect(VRMS).toBeCloseTo(162.635, 3)
    expect(POWER).toBeCloseTo(529.0, 1)
  })

  it.each(variants.filter(v => 'figures' in v.expect))('$label', async ({ bytes, options, expect: want }) => {
    const { figures } = want as Extract<Expect, { figures: unknown }>
    const parsed = await read(bytes, options)
    const a = analyseWaveform(parsed)
    const f = a.features
    const tol = figures.tolerance ?? 1e-3
    expect(a.sampleRateHz).toBeCloseTo(20_000, 3)
    expect(f.frequencyHz!).toBeCloseTo(50, 3)
    expect(f.cutType).toBe('leading_edge')
    expect(Math.abs(f.conductionAngleDeg.positive - 90)).toBeLessThan(0.5)
    expect(Math.abs(f.vrms / VRMS - 1)).toBeLessThan(tol)
    expect(Math.abs(f.supplyVrms! / 230 - 1)).toBeLessThan(tol)
    if (figures.current) {
      expect(Math.abs(f.current!.irms / IRMS - 1)).toBeLessThan(tol)
      expect(Math.abs(f.current!.realPowerW / POWER - 1)).toBeLessThan(2 * tol)
      // Across a resistive load voltage and current are in proportion: PF = 1 (definition).
      expect(f.current!.powerFactor!).toBeCloseTo(1, 3)
    }
    else expect(f.current).toBeUndefined()
    const skipped = figures.skipped ?? { count: 0 }
    expect(parsed.meta.droppedRows).toBe(skipped.count)
    expect(parsed.meta.skipped).toMatchObject(skipped)
    expect(parsed.meta.samples + parsed.meta.droppedRows).toBe(n)
  })
})

describe('capture exports: refused with what to change', () => {
  it.each(variants.filter(v => 'refusal' in v.expect))('$label', async ({ bytes, options, expect: want }) => {
    const { refusal: expected } = want as Extract<Expect, { refusal: unknown }>
    const got = await refusal(bytes, options)
    expect(got.code).toBe(expected.code)
    expect(got.message).toMatch(expected.message)
    if (expected.choices) {
      const columns = (got.error as CaptureFormatError).columns!
      expect(columns.filter(c => c.asVoltage).map(c => c.name)).toEqual(expected.choices.voltage)
      expect(columns.filter(c => c.asCurrent).map(c => c.name)).toEqual(expected.choices.current)
    }
  })

  it('names the rows left out and why, when few enough to go on', async () => {
    const text = writeExport(capture, { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], edit: (k, c) => (k >= 300 && k < 303 ? [c[0]!, 'OL', c[2]!] : k === 900 ? [c[0]!, c[1]!, ''] : c) })
    const { meta } = await read(text)
    // Rows are counted from 1 with the header as row 1: sample k is on row k + 2.
    expect(meta.skipped).toEqual({ count: 4, overRange: 3, empty: 1, unreadable: 0, ranges: [[302, 304], [902, 902]], columns: ['Voltage', 'Current'] })
  })
})

describe('any bytes at all: read, or refused with a reason (property, fast-check)', () => {
  const small = writeExport(synthesiseCapture({ sampleRateHz: 5_000, cycles: 3, cut: 'trailing_edge', conductionAngleDeg: 120, load: { resistanceOhm: 100 } }), { header: ['Time (s)', 'Voltage (V)', 'Current (A)'], digits: 6 })

  it('throws nothing but the parser\'s and the analysis\' refusals', async () => {
    await fc.assert(fc.asyncProperty(arbitraryUpload(fc, small), async (bytes) => {
      try {
        analyseWaveform(await read(bytes))
      }
      catch (error) {
        if (error instanceof CaptureFormatError || error instanceof WaveformError) return true
        throw error
      }
      return true
    }), { numRuns: 600, seed: 20250314 })
  }, 120_000)
})
