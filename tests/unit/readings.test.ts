import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { BASE_UNITS, SI_PREFIXES } from '#shared/types/measurement'
import type { BaseUnit, MeasurementSpec, Quantity } from '#shared/types/measurement'
import { evaluateReading, formatQuantity, parseReading, TOLERANCE_LETTERS } from '#shared/utils/readings'
import type { ParseReadingOptions } from '#shared/utils/readings'

function read(text: string, opts?: ParseReadingOptions) {
  const result = parseReading(text, opts)
  if (!result.ok) throw new Error(`expected "${text}" to parse, got: ${result.error}`)
  return result.reading
}

/** Relative comparison: values such as 4.7e-9 carry binary noise in their last bit. */
function expectClose(actual: number, expected: number, rel = 1e-12) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.max(Math.abs(expected), 1e-300))
}

const RESISTANCE: ParseReadingOptions = { quantity: 'resistance' }

describe('parseReading — IEC 60062 RKM code', () => {
  // Each row: IEC 60062 (RKM code for resistance values), letter in the decimal position.
  it.each([
    ['R47', 0.47, '0.47 Ω', 'IEC 60062 RKM: R47 = 0.47 Ω'],
    ['2R2', 2.2, '2.2 Ω', 'IEC 60062 RKM: 2R2 = 2.2 Ω'],
    ['4R7', 4.7, '4.7 Ω', 'IEC 60062 RKM: 4R7 = 4.7 Ω'],
    ['470R', 470, '470 Ω', 'IEC 60062 RKM: 470R = 470 Ω'],
    ['1K0', 1_000, '1 kΩ', 'IEC 60062 RKM: 1K0 = 1 kΩ'],
    ['4K7', 4_700, '4.7 kΩ', 'IEC 60062 RKM: 4K7 = 4.7 kΩ'],
    ['47K3', 47_300, '47.3 kΩ', 'IEC 60062 RKM: 47K3 = 47.3 kΩ'],
    ['M47', 470_000, '470 kΩ', 'IEC 60062 RKM: M47 = 470 kΩ'],
    ['4M7', 4_700_000, '4.7 MΩ', 'IEC 60062 RKM: 4M7 = 4.7 MΩ'],
    ['1G5', 1.5e9, '1.5 GΩ', 'IEC 60062 RKM: letter G = 10⁹'],
    ['4L7', 4.7e-3, '4.7 mΩ', 'IEC 60062 RKM: letter L = 10⁻³'],
    ['4k7', 4_700, '4.7 kΩ', 'IEC 60062 RKM, hand-written lower case k (common practice)'],
    ['2r2', 2.2, '2.2 Ω', 'IEC 60062 RKM, hand-written lower case r (common practice)'],
  ])('%s = %s Ω (%s, %s)', (text, ohms, display) => {
    for (const opts of [undefined, RESISTANCE]) {
      const r = read(text, opts)
      expectClose(r.value, ohms)
      expect(r.unit).toBe('Ω')
      expect(r.display).toBe(display)
      expect(r.tolerancePct).toBeUndefined()
    }
  })

  it.each([
    ['1K0F', 1_000, 1, 'IEC 60062 tolerance letter F = ±1 %'],
    ['4K7K', 4_700, 10, 'IEC 60062 tolerance letter K = ±10 %'],
    ['4K7B', 4_700, 0.1, 'IEC 60062 tolerance letter B = ±0.1 % (from memory)'],
    ['4K7C', 4_700, 0.25, 'IEC 60062 tolerance letter C = ±0.25 % (from memory)'],
    ['4K7D', 4_700, 0.5, 'IEC 60062 tolerance letter D = ±0.5 % (from memory)'],
    ['4K7G', 4_700, 2, 'IEC 60062 tolerance letter G = ±2 % (from memory)'],
    ['4K7J', 4_700, 5, 'IEC 60062 tolerance letter J = ±5 % (from memory)'],
    ['2M2M', 2_200_000, 20, 'IEC 60062 tolerance letter M = ±20 % (from memory)'],
    ['470RJ', 470, 5, 'IEC 60062: a letter after a complete code is a tolerance (J from memory)'],
    ['47KF', 47_000, 1, 'IEC 60062: K in the decimal position, then F = ±1 %'],
    ['4k7j', 4_700, 5, 'IEC 60062, hand-written lower case (J from memory)'],
  ])('%s = %s Ω ±%s % (%s)', (text, ohms, tolerance) => {
    const r = read(text, RESISTANCE)
    expectClose(r.value, ohms)
    expect(r.unit).toBe('Ω')
    expect(r.tolerancePct).toBe(tolerance)
    expect(r.display).toBe(`${formatQuantity(ohms, 'Ω')} ±${tolerance} %`)
  })

  it('has the tolerance table of IEC 60062 (F and K confirmed, the rest from memory)', () => {
    expect(TOLERANCE_LETTERS).toEqual({ B: 0.1, C: 0.25, D: 0.5, F: 1, G: 2, J: 5, K: 10, M: 20 })
  })

  it.each([
    ['4n7', 4.7e-9, '4.7 nF', 'IEC 60062 capacitance code, n in the decimal position (from memory)'],
    ['p47', 0.47e-12, '0.47 pF', 'IEC 60062 capacitance code, p in the decimal position (from memory)'],
    ['4u7', 4.7e-6, '4.7 µF', 'IEC 60062 capacitance code, µ written u (from memory)'],
    ['4u7F', 4.7e-6, '4.7 µF', 'a trailing F on a capacitor is the unit (common practice)'],
  ])('capacitor code %s = %s F (%s)', (text, farads, display) => {
    const r = read(text, { quantity: 'capacitance' })
    expectClose(r.value, farads)
    expect(r.display).toBe(display)
  })
})

describe('parseReading — SI values', () => {
  // SI Brochure, 9th ed. (BIPM 2019), Table 7: prefixes p 10⁻¹², n 10⁻⁹, µ 10⁻⁶, m 10⁻³, k 10³, M 10⁶, G 10⁹.
  it.each([
    ['470k', RESISTANCE, 470e3, 'Ω', '470 kΩ', 'SI prefix k; not an RKM tolerance'],
    ['470 kΩ', {}, 470e3, 'Ω', '470 kΩ', 'SI prefix k, with a space'],
    ['470kΩ', {}, 470e3, 'Ω', '470 kΩ', 'SI prefix k, no space'],
    ['2.2M', RESISTANCE, 2.2e6, 'Ω', '2.2 MΩ', 'SI prefix M'],
    ['2.2 Mohm', {}, 2.2e6, 'Ω', '2.2 MΩ', 'SI prefix M, unit spelt ohm'],
    ['12mΩ', {}, 12e-3, 'Ω', '12 mΩ', 'SI prefix m on Ω is milli'],
    ['12 mohms', {}, 12e-3, 'Ω', '12 mΩ', 'SI prefix m, unit spelt ohms'],
    ['4.7kR', {}, 4.7e3, 'Ω', '4.7 kΩ', 'R as the ohm sign (common practice)'],
    ['4.7 K', RESISTANCE, 4.7e3, 'Ω', '4.7 kΩ', 'upper-case K as kilo on Ω (common practice)'],
    ['0.58V', {}, 0.58, 'V', '0.58 V', 'no prefix, no space'],
    ['580 mV', {}, 0.58, 'V', '0.58 V', 'SI prefix m on V is milli'],
    ['1.2 MV', {}, 1.2e6, 'V', '1.2 MV', 'SI prefix M on V is mega'],
    ['10uF', {}, 10e-6, 'F', '10 µF', 'µ typed as u'],
    ['10µF', {}, 10e-6, 'F', '10 µF', 'µ as U+00B5 MICRO SIGN'],
    ['10μF', {}, 10e-6, 'F', '10 µF', 'µ as U+03BC GREEK SMALL LETTER MU'],
    ['100 nF', {}, 100e-9, 'F', '100 nF', 'SI prefix n'],
    ['22pF', {}, 22e-12, 'F', '22 pF', 'SI prefix p'],
    ['10mF', {}, 10e-3, 'F', '10 mF', 'SI prefix m on F is milli'],
    ['150 mA', {}, 0.15, 'A', '0.15 A', 'SI prefix m on A'],
    ['50 Hz', {}, 50, 'Hz', '50 Hz', 'no prefix'],
    ['65kHz', {}, 65e3, 'Hz', '65 kHz', 'SI prefix k on Hz'],
    ['1.2 MHz', {}, 1.2e6, 'Hz', '1.2 MHz', 'SI prefix M on Hz is mega'],
    ['1 GΩ', {}, 1e9, 'Ω', '1 GΩ', 'SI prefix G'],
    ['85 °C', {}, 85, '°C', '85 °C', 'degree Celsius'],
    ['85degC', {}, 85, '°C', '85 °C', 'degC spelling'],
    ['85C', { quantity: 'temperature' }, 85, '°C', '85 °C', 'C after a number on a temperature step'],
    ['-40 °C', {}, -40, '°C', '-40 °C', 'negative temperature'],
  ] as Array<[string, ParseReadingOptions, number, BaseUnit, string, string]>)('%s → %s %s (SI Brochure, 9th ed., Table 7: %s)', (text, opts, value, unit, display) => {
    const r = read(text, opts)
    expectClose(r.value, value)
    expect(r.unit).toBe(unit)
    expect(r.display).toBe(display)
  })

  // SI Brochure, 9th ed., §5.4.2: the decimal marker is the point or the comma on the line (from memory).
  it.each([
    ['0,58 V', 0.58, 'V', '0.58 V'],
    ['4,7 kΩ', 4_700, 'Ω', '4.7 kΩ'],
    [',5 V', 0.5, 'V', '0.5 V'],
    ['1,000', 1, null, '1'],
  ] as Array<[string, number, BaseUnit | null, string]>)('decimal comma: %s → %s (SI Brochure §5.4.2, from memory)', (text, value, unit, display) => {
    const r = read(text)
    expectClose(r.value, value)
    expect(r.unit).toBe(unit)
    expect(r.display).toBe(display)
  })

  it.each([
    ['-0.58 V', -0.58, '-0.58 V'],
    ['−0.58 V', -0.58, '-0.58 V'],
    ['-12 mA', -0.012, '-12 mA'],
    ['+5 V', 5, '5 V'],
    ['-0', 0, '0'],
  ])('negative values: %s → %s (meters show a sign on reversed probes, common practice)', (text, value, display) => {
    const r = read(text)
    expectClose(r.value, value)
    expect(Object.is(r.value, -0)).toBe(false)
    expect(r.display).toBe(display)
  })

  it.each([
    ['4.7', 'kΩ', 'resistance', 4_700, '4.7 kΩ'],
    ['580', 'mV', 'diode_drop', 0.58, '0.58 V'],
    ['10', 'µF', 'capacitance', 10e-6, '10 µF'],
    ['0.2', 'Ω', 'continuity', 0.2, '0.2 Ω'],
    ['230', 'V', 'ac_voltage', 230, '230 V'],
    ['72', '°C', 'temperature', 72, '72 °C'],
    ['470k', 'kΩ', 'resistance', 470e3, '470 kΩ'],
    ['470m', 'kΩ', 'resistance', 0.47, '0.47 Ω'],
  ] as Array<[string, string, Quantity, number, string]>)('a bare number takes the step unit: %s in %s (SI Brochure, 9th ed., Table 7)', (text, unit, quantity, value, display) => {
    const r = read(text, { unit, quantity })
    expectClose(r.value, value)
    expect(r.display).toBe(display)
  })

  it('a bare number with no step context has no unit', () => {
    const r = read('1e3')
    expect(r).toMatchObject({ value: 1000, unit: null, display: '1000' })
  })

  it('reads an explicit tolerance after an SI value (IEC 60062 ±5 %, from memory)', () => {
    const r = read('4.7k ±5%', RESISTANCE)
    expect(r).toMatchObject({ value: 4_700, unit: 'Ω', tolerancePct: 5, display: '4.7 kΩ ±5 %' })
  })
})

describe('parseReading — open and short', () => {
  // A meter's overload display reads "OL" or "O.L" (meter manuals; common practice).
  it.each(['OL', 'O.L', 'O.L.', 'ol', '-OL', 'open', 'Open circuit', '∞', 'inf', '0L'])('%s is an open circuit (meter manuals, common practice)', (text) => {
    const r = read(text, RESISTANCE)
    expect(r).toMatchObject({ open: true, short: false, display: 'OL', unit: 'Ω' })
    expect(r.value).toBe(Infinity)
  })

  it.each([
    ['short', 'resistance', 'Ω', 'short (0 Ω)'],
    ['Shorted', 'diode_drop', 'V', 'short (0 V)'],
    ['short circuit', 'continuity', 'Ω', 'short (0 Ω)'],
  ] as Array<[string, Quantity, BaseUnit, string]>)('%s is a short: 0 in the quantity unit (common practice)', (text, quantity, unit, display) => {
    const r = read(text, { quantity })
    expect(r).toMatchObject({ value: 0, unit, short: true, open: false, display })
  })
})

describe('parseReading — errors', () => {
  it.each([
    ['4x7', /could not read "4x7": /],
    ['1.2.3 V', /could not read "1\.2\.3 V"/],
    ['1,000.5', /could not read "1,000\.5"/],
    ['1 000', /could not read "1 000"/],
    ['abc', /could not read "abc"/],
    ['5 kg', /unknown unit "kg"/],
    ['3 psi', /unknown unit "psi"/],
    ['', /no reading/],
    ['   ', /no reading/],
    ['1e999 V', /out of range/],
    ['4'.repeat(80), /at most 64 characters/],
  ])('%s is refused with a clear message', (text, message) => {
    const result = parseReading(text)
    expect(result.ok).toBe(false)
    if (!result.ok) expect(result.error).toMatch(message)
  })

  it.each([
    ['4.7 V', 'resistance', /"4\.7 V" is a voltage/],
    ['10 µF', 'dc_voltage', /is a capacitance/],
    ['85 °C', 'resistance', /is a temperature/],
    ['85C', 'capacitance', /is a temperature/],
    ['470k', 'temperature', /takes no prefix/],
    ['4K7', 'dc_voltage', /could not read "4K7"/],
  ] as Array<[string, Quantity, RegExp]>)('%s on a %s step is a unit error', (text, quantity, message) => {
    const result = parseReading(text, { quantity })
    expect(result.ok).toBe(false)
    if (!result.ok) expect(result.error).toMatch(message)
  })

  it('refuses a step unit it does not know', () => {
    expect(parseReading('4.7', { unit: 'furlong' })).toMatchObject({ ok: false })
    expect(parseReading('4.7', { unit: 'V', quantity: 'resistance' })).toMatchObject({ ok: false })
  })
})

describe('formatQuantity', () => {
  // Engineering notation with SI prefixes (SI Brochure, 9th ed., Table 7), 4 significant digits.
  it.each([
    [4_700, 'Ω', '4.7 kΩ'],
    [0.58, 'V', '0.58 V'],
    [10e-6, 'F', '10 µF'],
    [0.012, 'Ω', '12 mΩ'],
    [0.05, 'V', '50 mV'],
    [0, 'Ω', '0 Ω'],
    [1_000, 'Hz', '1 kHz'],
    [999.96, 'V', '1 kV'],
    [999.94, 'V', '999.9 V'],
    [4_464.999999999999, 'Ω', '4.465 kΩ'],
    [123_456, 'Ω', '123.5 kΩ'],
    [-0.25, 'A', '-0.25 A'],
    [1e-6, 'F', '1 µF'],
    [3.3e12, 'Ω', '3300 GΩ'],
    [72.25, '°C', '72.25 °C'],
    [Infinity, 'Ω', 'OL'],
  ] as Array<[number, BaseUnit, string]>)('%s %s → %s (SI Brochure, 9th ed., Table 7)', (value, unit, text) => {
    expect(formatQuantity(value, unit)).toBe(text)
  })

  const PREFIX_EXPONENTS = [...new Set(Object.values(SI_PREFIXES))]
  const PREFIXED_UNITS = BASE_UNITS.filter(u => u !== '°C')

  it('parse(format(x)) returns x to 4 significant digits across all prefixes (property)', () => {
    fc.assert(fc.property(
      fc.double({ min: 1, max: 999.9, noNaN: true }),
      fc.constantFrom(...PREFIX_EXPONENTS),
      fc.constantFrom(...PREFIXED_UNITS),
      fc.boolean(),
      (mantissa, exponent, unit, negative) => {
        const x = (negative ? -1 : 1) * mantissa * 10 ** exponent
        const text = formatQuantity(x, unit)
        const r = read(text)
        expect(r.unit).toBe(unit)
        // Rounding to 4 significant digits moves a value by at most half a unit in the 4th digit.
        expect(Math.abs(r.value - x)).toBeLessThanOrEqual(5.0001e-4 * Math.abs(x))
        expect(formatQuantity(r.value, unit)).toBe(text)
      },
    ))
  })

  it('parse(format(t)) returns a temperature to 4 significant digits (property)', () => {
    fc.assert(fc.property(fc.double({ min: -273, max: 2000, noNaN: true }), (t) => {
      const r = read(formatQuantity(t, '°C'))
      expect(r.unit).toBe('°C')
      expect(Math.abs(r.value - t)).toBeLessThanOrEqual(5.0001e-4 * Math.abs(t) + 1e-12)
    }))
  })
})

describe('parseReading never throws', () => {
  it('returns a result for arbitrary text (property)', () => {
    const quantities = fc.option(fc.constantFrom<Quantity>('resistance', 'dc_voltage', 'capacitance', 'temperature', 'continuity'), { nil: undefined })
    const typed = fc.oneof(
      fc.string({ unit: 'binary', maxLength: 24 }),
      fc.stringMatching(/^[-+−]?[0-9.,]{0,6}[ ]?[pnuµμmkKMGRrLFJ±%ΩVAHzCdeg°]{0,5}[0-9]{0,3}$/),
    )
    fc.assert(fc.property(typed, quantities, (text, quantity) => {
      const result = parseReading(text, { quantity })
      if (result.ok) {
        expect(Number.isNaN(result.reading.value)).toBe(false)
        expect(typeof result.reading.display).toBe('string')
      }
      else {
        expect(result.error.length).toBeGreaterThan(0)
      }
    }), { numRuns: 500 })
  })
})

describe('evaluateReading — multimeter diode test', () => {
  // Good silicon junction, forward: 0.40–0.90 V (meter manuals; rule of thumb, not a datasheet limit).
  const silicon: MeasurementSpec = { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }
  // Schottky junction, forward: 0.15–0.45 V (common practice).
  const schottky: MeasurementSpec = { quantity: 'diode_drop', unit: 'V', min: 0.15, max: 0.45 }
  // A junction reading below 0.050 V is shorted (a common meter beep threshold).
  const notShorted: MeasurementSpec = { quantity: 'diode_drop', unit: 'V', min: 0.05 }

  it.each([
    ['0.58', silicon, 'in_range', true, 'good silicon junction (meter manuals)'],
    ['0,62 V', silicon, 'in_range', true, 'good silicon junction, decimal comma (meter manuals)'],
    ['580 mV', silicon, 'in_range', true, 'good silicon junction in mV (meter manuals)'],
    ['0.4', silicon, 'in_range', true, 'lower limit inclusive (meter manuals)'],
    ['0.90 V', silicon, 'in_range', true, 'upper limit inclusive (meter manuals)'],
    ['0.39', silicon, 'low', false, 'below a silicon junction (meter manuals)'],
    ['0.95', silicon, 'high', false, 'above a silicon junction (meter manuals)'],
    ['OL', silicon, 'open', false, 'open junction reads OL (meter manuals)'],
    ['short', silicon, 'low', false, 'short reads as 0 V (common practice)'],
    ['0.3', schottky, 'in_range', true, 'Schottky forward drop (common practice)'],
    ['0.15', schottky, 'in_range', true, 'Schottky lower limit inclusive (common practice)'],
    ['0.45', schottky, 'in_range', true, 'Schottky upper limit inclusive (common practice)'],
    ['0.62', schottky, 'high', false, 'a silicon drop is too high for a Schottky (common practice)'],
    ['0.012', notShorted, 'low', false, 'shorted junction < 0.050 V (common meter beep threshold)'],
    ['0.050', notShorted, 'in_range', true, 'exactly on the beep threshold passes (common meter beep threshold)'],
    ['0.6', notShorted, 'in_range', true, 'a normal drop is not a short (meter manuals)'],
  ] as Array<[string, MeasurementSpec, string, boolean, string]>)('%s → %s (%s: %s)', (text, spec, verdict, pass) => {
    const result = evaluateReading(text, spec, ['failed_diode'])
    expect(result.ok).toBe(true)
    if (!result.ok) return
    expect(result.verdict).toBe(verdict)
    expect(result.pass).toBe(pass)
    expect(result.raises).toEqual(pass ? [] : ['failed_diode'])
  })

  it('writes the expected window in the step unit family (meter manuals: 0.4–0.9 V)', () => {
    expect(evaluateReading('0.6', silicon)).toMatchObject({ expected: '0.4 V – 0.9 V' })
    const inMillivolts: MeasurementSpec = { quantity: 'diode_drop', unit: 'mV', min: 400, max: 900 }
    expect(evaluateReading('0.58 V', inMillivolts)).toMatchObject({ verdict: 'in_range', expected: '0.4 V – 0.9 V' })
    expect(evaluateReading('580', inMillivolts)).toMatchObject({ verdict: 'in_range' })
    expect(evaluateReading('0.6', notShorted)).toMatchObject({ expected: '≥ 50 mV' })
  })
})

describe('evaluateReading — thermal fuse and open-expected checks', () => {
  // Thermal fuse: continuity when intact, OL when blown (common practice). 1 Ω is the step's limit.
  const fuseIntact: MeasurementSpec = { quantity: 'continuity', unit: 'Ω', max: 1 }

  it.each([
    ['0.2', 'in_range', true, 'intact fuse conducts (common practice)'],
    ['short', 'in_range', true, 'a short is continuity (common practice)'],
    ['OL', 'open', false, 'blown fuse reads OL (common practice)'],
    ['O.L', 'open', false, 'blown fuse, dotted overload display (common practice)'],
    ['1', 'in_range', true, 'on the limit passes'],
    ['4.7', 'high', false, 'resistive where it should conduct'],
  ])('fuse continuity %s → %s (%s)', (text, verdict, pass) => {
    const result = evaluateReading(text, fuseIntact, ['thermal_fuse_open'])
    expect(result).toMatchObject({ ok: true, verdict, pass, raises: pass ? [] : ['thermal_fuse_open'], expected: '≤ 1 Ω' })
  })

  // N-channel MOSFET G–S reads OL both ways once the gate is discharged (common practice).
  const gateSource: MeasurementSpec = { quantity: 'resistance', unit: 'Ω', openExpected: true }

  it.each([
    ['OL', 'open', true, 'G–S open after discharging the gate (common practice)'],
    ['12', 'low', false, 'a finite G–S reading is a failed gate (common practice)'],
    ['0.2 Ω', 'low', false, 'G–S shorted (common practice)'],
    ['short', 'low', false, 'G–S shorted (common practice)'],
  ])('open expected: %s → %s (%s)', (text, verdict, pass) => {
    const result = evaluateReading(text, gateSource, ['gate_short'])
    expect(result).toMatchObject({ ok: true, verdict, pass, expected: 'open', raises: pass ? [] : ['gate_short'] })
  })

  // A good MOV reads open or very high both ways (common practice); 10 MΩ is the step's floor.
  const mov: MeasurementSpec = { quantity: 'resistance', unit: 'MΩ', min: 10, openExpected: true }

  it.each([
    ['OL', 'open', true],
    ['22M', 'in_range', true],
    ['10', 'in_range', true],
    ['0.5', 'low', false],
    ['3 Ω', 'low', false],
  ])('MOV %s → %s (common practice: open or very high when good)', (text, verdict, pass) => {
    expect(evaluateReading(text, mov, ['mov_failed'])).toMatchObject({ ok: true, verdict, pass, expected: 'open or ≥ 10 MΩ' })
  })
})

describe('evaluateReading — nominal ± tolerance', () => {
  // 4K7 with tolerance letter J = ±5 % (IEC 60062, J from memory): window 4.465–4.935 kΩ (4.7 × 0.95, 4.7 × 1.05).
  const fourK7: MeasurementSpec = { quantity: 'resistance', unit: 'kΩ', nominal: 4.7, tolerancePct: 5 }

  it.each([
    ['4K7', 'in_range', true],
    ['4.7', 'in_range', true],
    ['4.465', 'in_range', true],
    ['4.935k', 'in_range', true],
    ['4465 Ω', 'in_range', true],
    ['4.46k', 'low', false],
    ['4.94 kΩ', 'high', false],
    ['5K1', 'high', false],
    ['4K3', 'low', false],
    ['OL', 'open', false],
    ['short', 'low', false],
  ])('4K7 ±5 %%: %s → %s (IEC 60062 J = ±5 %, from memory)', (text, verdict, pass) => {
    expect(evaluateReading(text, fourK7, ['drifted_resistor'])).toMatchObject({
      ok: true,
      verdict,
      pass,
      expected: '4.465 kΩ – 4.935 kΩ',
      raises: pass ? [] : ['drifted_resistor'],
    })
  })

  it('builds the window from a code tolerance letter (IEC 60062 F = ±1 %)', () => {
    const code = read('1K0F', RESISTANCE)
    const spec: MeasurementSpec = { quantity: 'resistance', unit: 'Ω', nominal: code.value, tolerancePct: code.tolerancePct }
    expect(evaluateReading('990', spec)).toMatchObject({ verdict: 'in_range', expected: '990 Ω – 1.01 kΩ' })
    expect(evaluateReading('1.01k', spec)).toMatchObject({ verdict: 'in_range' })
    expect(evaluateReading('989', spec)).toMatchObject({ verdict: 'low' })
    expect(evaluateReading('1011', spec)).toMatchObject({ verdict: 'high' })
  })

  it('readings exactly on a computed limit pass despite binary rounding', () => {
    // 0.1 + 0.2 style noise: 3.3 × (1 − 0.1) is not exactly 2.97 in binary.
    const spec: MeasurementSpec = { quantity: 'dc_voltage', unit: 'V', nominal: 3.3, tolerancePct: 10 }
    expect(evaluateReading('2.97', spec)).toMatchObject({ verdict: 'in_range' })
    expect(evaluateReading('3.63', spec)).toMatchObject({ verdict: 'in_range' })
    expect(evaluateReading('2.969', spec)).toMatchObject({ verdict: 'low' })
    const tiny: MeasurementSpec = { quantity: 'capacitance', unit: 'nF', min: 4.23, max: 5.17 }
    expect(evaluateReading('4n23', tiny)).toMatchObject({ verdict: 'in_range' })
    expect(evaluateReading('5.17 nF', tiny)).toMatchObject({ verdict: 'in_range' })
  })
})

describe('evaluateReading — errors and causes', () => {
  const fourK7: MeasurementSpec = { quantity: 'resistance', unit: 'kΩ', nominal: 4.7, tolerancePct: 5 }

  it.each([
    ['4.7 V', /"4\.7 V" is a voltage/],
    ['10 µF', /is a capacitance/],
    ['5 kg', /unknown unit "kg"/],
    ['4x7', /could not read "4x7"/],
  ])('%s on a resistance step is an error, not a fail', (text, message) => {
    const result = evaluateReading(text, fourK7, ['drifted_resistor'])
    expect(result.ok).toBe(false)
    if (!result.ok) expect(result.error).toMatch(message)
  })

  it('checks the unit of an already parsed reading', () => {
    const volts = read('4.7 V')
    expect(evaluateReading(volts, fourK7)).toMatchObject({ ok: false })
    const ohms = read('4K7')
    expect(evaluateReading(ohms, fourK7)).toMatchObject({ ok: true, verdict: 'in_range' })
  })

  it('refuses a spec that does not validate', () => {
    const broken = { quantity: 'resistance', unit: 'V', min: 1 } as MeasurementSpec
    expect(evaluateReading('1', broken)).toMatchObject({ ok: false })
  })

  it('raises each pointed-to cause once, and only on a fail', () => {
    const spec: MeasurementSpec = { quantity: 'dc_voltage', unit: 'V', min: 11.4, max: 12.6 }
    expect(evaluateReading('12', spec, ['dried_cap', 'open_regulator'])).toMatchObject({ pass: true, raises: [] })
    expect(evaluateReading('9.1', spec, ['dried_cap', 'open_regulator', 'dried_cap'])).toMatchObject({
      pass: false,
      verdict: 'low',
      raises: ['dried_cap', 'open_regulator'],
    })
    expect(evaluateReading('9.1', spec)).toMatchObject({ pass: false, raises: [] })
  })

  it('judges temperatures and frequencies in their own units', () => {
    const hot: MeasurementSpec = { quantity: 'temperature', unit: '°C', max: 85 }
    expect(evaluateReading('72 °C', hot)).toMatchObject({ verdict: 'in_range', expected: '≤ 85 °C' })
    expect(evaluateReading('90C', hot)).toMatchObject({ verdict: 'high' })
    const mains: MeasurementSpec = { quantity: 'frequency', unit: 'Hz', min: 49.5, max: 50.5 }
    expect(evaluateReading('50', mains)).toMatchObject({ verdict: 'in_range', expected: '49.5 Hz – 50.5 Hz' })
    expect(evaluateReading('0.06 kHz', mains)).toMatchObject({ verdict: 'high' })
  })
})

describe('parseReading — the trade\'s suffixes and signs', () => {
  it.each([
    ['230 VAC', 'ac_voltage', 230, 'V', 'AC mark after the unit on mains ranges (common practice)'],
    ['230 V AC', 'ac_voltage', 230, 'V', 'AC mark set apart (common practice)'],
    ['230V~', 'ac_voltage', 230, 'V', '~ is the AC symbol, IEC 60417-5032 (from memory)'],
    ['230 Vrms', 'ac_voltage', 230, 'V', 'true-RMS meters label AC volts Vrms (common practice)'],
    ['230 vac', 'ac_voltage', 230, 'V', 'lower-case AC mark (common practice)'],
    ['12 VDC', 'dc_voltage', 12, 'V', 'DC mark on adapters and meters (common practice)'],
    ['12 V DC', 'dc_voltage', 12, 'V', 'DC mark set apart (common practice)'],
    ['150 mA DC', 'current', 0.15, 'A', 'DC mark after a current (common practice)'],
    ['10 MFD', 'capacitance', 10e-6, 'F', 'MFD is the old microfarad marking on capacitor bodies (common practice)'],
    ['10mfd', 'capacitance', 10e-6, 'F', 'mfd, the same marking in lower case (common practice)'],
    ['85°', 'temperature', 85, '°C', 'a bare degree sign on a temperature step (common practice)'],
    ['85 °', 'temperature', 85, '°C', 'a bare degree sign set apart (common practice)'],
    ['4k7Ω', 'resistance', 4_700, 'Ω', 'IEC 60062 RKM code followed by the ohm sign (common practice)'],
    ['4K7 ohm', 'resistance', 4_700, 'Ω', 'IEC 60062 RKM code followed by the word ohm (common practice)'],
    ['R47Ω', 'resistance', 0.47, 'Ω', 'IEC 60062 RKM R47 = 0.47 Ω with the ohm sign'],
    ['–0.58 V', 'dc_voltage', -0.58, 'V', 'en dash typed for minus (phones and word processors substitute it; common practice)'],
    ['- 0.58 V', 'dc_voltage', -0.58, 'V', 'minus spaced from the number (common practice)'],
    ['− 12 mA', 'current', -0.012, 'A', 'U+2212 MINUS SIGN spaced from the number (Unicode; common practice)'],
  ] as Array<[string, Quantity, number, BaseUnit, string]>)('%s on a %s step → %s %s (%s)', (text, quantity, value, unit) => {
    const r = read(text, { quantity })
    expectClose(r.value, value)
    expect(r.unit).toBe(unit)
    expect(r.open).toBe(false)
  })

  it.each([
    ['230 VAC', 'dc_voltage', /"230 VAC" is an AC reading; this step reads dc voltage/],
    ['230 V~', 'dc_voltage', /is an AC reading/],
    ['12 VDC', 'ac_voltage', /"12 VDC" is a DC reading; this step reads ac voltage/],
    ['10 MFD', 'resistance', /is a capacitance/],
    ['85°', 'dc_voltage', /unknown unit "°"/],
  ] as Array<[string, Quantity, RegExp]>)('%s on a %s step is refused (an AC mark on a DC step measures the wrong thing; common practice)', (text, quantity, message) => {
    const result = parseReading(text, { quantity })
    expect(result.ok).toBe(false)
    if (!result.ok) expect(result.error).toMatch(message)
  })

  it.each([
    ['1.', 'resistance', 'a lone leading 1 is the overrange of a 3½-digit display (meter manuals, common practice)'],
    ['1.', 'diode_drop', 'a lone 1 on a diode test is an open junction (meter manuals, common practice)'],
    ['–OL', 'resistance', 'en dash before OL on a resistance range is still open (common practice)'],
    ['-OL', 'diode_drop', 'a diode test has no negative reading: -OL is open (common practice)'],
    ['-OL', 'ac_voltage', 'AC volts have no sign: -OL is the overrange (common practice)'],
  ] as Array<[string, Quantity, string]>)('%s on a %s step is open (%s)', (text, quantity) => {
    expect(read(text, { quantity })).toMatchObject({ value: Infinity, open: true, display: 'OL' })
  })

  it.each([
    ['-OL', 'dc_voltage', 'negative overrange on a DC range (meter manuals, common practice)'],
    ['- OL', 'dc_voltage', 'negative overrange, spaced (common practice)'],
    ['–OL', 'current', 'negative overrange with an en dash (common practice)'],
    ['-1.', 'dc_voltage', 'a lone -1 is the negative overrange of a 3½-digit display (common practice)'],
  ] as Array<[string, Quantity, string]>)('%s on a %s step is below the scale (%s)', (text, quantity) => {
    expect(read(text, { quantity })).toMatchObject({ value: -Infinity, open: false, display: '-OL' })
  })

  it('a number with digits after the point is not the overrange display (common practice)', () => {
    expect(read('1.0', { quantity: 'resistance' })).toMatchObject({ value: 1, open: false })
    expect(read('1', { quantity: 'resistance' })).toMatchObject({ value: 1, open: false })
  })
})

describe('evaluateReading — overrange verdicts', () => {
  // 12 V rail: 11.4–12.6 V (±5 %, common practice for a regulated rail).
  const rail: MeasurementSpec = { quantity: 'dc_voltage', unit: 'V', min: 11.4, max: 12.6 }

  it('-OL on a DC step is low, not open (negative overrange, meter manuals; common practice)', () => {
    expect(evaluateReading('-OL', rail, ['reversed_polarity'])).toMatchObject({ ok: true, verdict: 'low', pass: false, raises: ['reversed_polarity'] })
    expect(evaluateReading('OL', rail)).toMatchObject({ verdict: 'open', pass: false })
  })

  it('1. on a continuity step is a blown fuse (lone 1 = overrange; thermal fuse OL when blown, common practice)', () => {
    const fuse: MeasurementSpec = { quantity: 'continuity', unit: 'Ω', max: 5 }
    expect(evaluateReading('1.', fuse, ['fuse_open'])).toMatchObject({ verdict: 'open', pass: false, raises: ['fuse_open'] })
  })
})

describe('evaluateReading — a likely slip is questioned, not failed', () => {
  // Good silicon junction 0.40–0.90 V (REFERENCES, meter manuals).
  const silicon: MeasurementSpec = { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.9 }
  const ask = { ask: true }

  it.each([
    ['580MV', '580 mV', 'M for m on a diode test: 580 MV vs 0.4–0.9 V (SI Brochure Table 7: M = 10⁶, m = 10⁻³)', silicon],
    ['580 MV', '580 mV', 'same, spaced', silicon],
    ['150 MA', '150 mA', 'M for m on a 100–200 mA step (SI Brochure Table 7)', { quantity: 'current', unit: 'mA', min: 100, max: 200 }],
    ['1.2 mhz', '1.2 MHz', 'm for M on a 1–1.5 MHz step (SI Brochure Table 7)', { quantity: 'frequency', unit: 'MHz', min: 1, max: 1.5 }],
    ['0.1 MF', '0.1 µF', 'MF meant µF on old capacitor bodies (common practice)', { quantity: 'capacitance', unit: 'nF', nominal: 100, tolerancePct: 10 }],
    ['0.1 MF', '0.1 mF', 'on an 80–120 µF step, 0.1 mF = 100 µF fits (SI Brochure Table 7)', { quantity: 'capacitance', unit: 'µF', min: 80, max: 120 }],
    ['4.7 mΩ', '4.7 MΩ', 'm for M on a 4.7 MΩ resistor (SI Brochure Table 7)', { quantity: 'resistance', unit: 'MΩ', nominal: 4.7, tolerancePct: 5 }],
    ['230 MVAC', '230 mV', 'wrong case before an AC mark (SI Brochure Table 7; common practice)', { quantity: 'ac_voltage', unit: 'mV', min: 200, max: 250 }],
  ] as Array<[string, string, string, MeasurementSpec]>)('%s → "did you mean %s?" (%s)', (text, suggestion, _source, spec) => {
    const answer = evaluateReading(text, spec, ['some_cause'], ask)
    expect(answer).toMatchObject({ ok: true, verdict: null, pass: null, raises: [], question: `did you mean ${suggestion}?`, suggestion })
    // The suggestion itself passes the step.
    expect(evaluateReading(suggestion, spec)).toMatchObject({ ok: true, pass: true })
    // Without asking, the same text keeps its verdict for existing callers.
    expect(evaluateReading(text, spec, ['some_cause'])).toMatchObject({ ok: true, pass: false, raises: ['some_cause'] })
  })

  it.each([
    ['0.95', silicon, 'an honest high reading: no prefix to blame'],
    ['5 mV', silicon, 'a shorted junction in mV (< 50 mV, common meter beep threshold): 5 MV would not fit either'],
    ['900 MV', { quantity: 'diode_drop', unit: 'V', min: 0.4, max: 0.85 } as MeasurementSpec, '900 mV fails too: no question'],
    ['580MV', { quantity: 'diode_drop', unit: 'V', min: 0.05 } as MeasurementSpec, 'within a window with no maximum: judged, not asked'],
    ['OL', silicon, 'an open junction is a verdict (meter manuals)'],
  ] as Array<[string, MeasurementSpec, string]>)('%s is judged, not questioned (%s)', (text, spec) => {
    const answer = evaluateReading(text, spec, [], ask)
    expect(answer.ok).toBe(true)
    if (answer.ok) expect(answer.verdict).not.toBeNull()
  })

  it('asks about a lone 1. where the number 1 would pass (lone 1 = overrange on 3½-digit meters, common practice)', () => {
    const fuse: MeasurementSpec = { quantity: 'continuity', unit: 'Ω', max: 5 }
    const answer = evaluateReading('1.', fuse, [], ask)
    expect(answer).toMatchObject({ verdict: null, suggestion: '1 Ω' })
    if (answer.ok && answer.verdict === null) expect(answer.question).toBe('did you mean 1 Ω? "1." reads as the meter\'s overrange (OL)')
    // Where 1 would fail as well, the overrange stands.
    expect(evaluateReading('1.', { quantity: 'continuity', unit: 'Ω', max: 0.5 }, [], ask)).toMatchObject({ verdict: 'open' })
  })
})
