/**
 * Which column is time, which the load voltage and which the current. Decided from the header
 * and the units (a unit row, units in the header cells, or the metadata), never from what the
 * first data row happens to hold: a cell over range or left empty there says nothing about its
 * column. Columns in units of another quantity (W, Hz…) and computed channels are never taken
 * for voltage or current; where the file leaves the choice open (two voltage channels, a channel
 * with neither unit nor telling name) the technician chooses, and the parser says among what.
 */
import type { Metadata } from './metadata'
import { CaptureFormatError, type CaptureColumn, type ColumnChoice, type ColumnInfo, type ColumnQuantity, type CurrentUnit, type TimeUnit, type VoltageUnit } from './types'
import { CURRENT_NAME, INDEX_NAME, isBlank, isDateTime, MATH_NAME, parseQuantity, parseUnit, splitHeader, TIME_NAME, VOLTAGE_NAME, type UnitInfo } from './units'

export interface Layout {
  timeCol: number | null
  /** seconds: a time column (× timeScale); index: start + value × interval; row: start + data row × interval. */
  timeKind: 'seconds' | 'index' | 'row' | 'date_time'
  timeScale: number
  start: number
  interval: number
  voltageCol: number
  voltageScale: number
  currentCol: number | null
  currentScale: number
}

export interface ColumnPlan {
  layout: Layout
  columns: { time: CaptureColumn, voltage: CaptureColumn, current?: CaptureColumn }
  units: { time: TimeUnit, voltage: VoltageUnit, current?: CurrentUnit }
  timeSource: 'column' | 'sample_interval' | 'date_time'
  sampleIntervalS?: number
}

interface Column extends ColumnInfo {
  unitInfo: UnitInfo | null
  /** How the quantity is known: from a unit, from the name, or not at all. */
  basis: 'unit' | 'name' | 'none'
  /** Carries values in the rows looked at. */
  hasData: boolean
  /** A rate or interval written beside the name ("Sample (50 kS/s)"). */
  interval?: number
}

interface PlanInput {
  prologue: string[][]
  /** The first data rows. */
  rows: string[][]
  meta: Metadata
  isNumeric: (field: string | undefined) => boolean
  decimalComma: boolean
  choice?: ColumnChoice
}

/** The header row and the unit row among the last rows before the data, when there are any. */
function headerAndUnits(prologue: string[][], isNumeric: PlanInput['isNumeric'], width: number): { header: string[] | null, unitRow: string[] | null } {
  const isUnitRow = (row: string[]): boolean => {
    let units = 0
    for (const f of row) {
      if (isBlank(f)) continue
      if (parseUnit(f) !== null) units++
      else if (!isNumeric(f)) return false
    }
    return units > 0
  }
  const isHeaderRow = (row: string[]): boolean => {
    const named = row.filter(f => !isBlank(f))
    return named.length >= Math.min(2, width) && named.every(f => !isNumeric(f))
  }
  let r = prologue.length - 1
  let unitRow: string[] | null = null
  if (r >= 0 && isUnitRow(prologue[r]!)) unitRow = prologue[r--]!
  const header = r >= 0 && isHeaderRow(prologue[r]!) ? prologue[r]! : null
  return { header, unitRow }
}

function describeColumns(input: PlanInput): { columns: Column[], hasHeader: boolean } {
  const width = Math.max(...input.rows.map(r => r.length))
  const { header, unitRow } = headerAndUnits(input.prologue, input.isNumeric, width)
  const count = Math.max(width, header?.length ?? 0)
  const columns: Column[] = []
  for (let c = 0; c < count; c++) {
    const cell = header?.[c]
    const split = cell !== undefined && !isBlank(cell) ? splitHeader(cell) : null
    const unitCell = unitRow?.[c]
    const fromRow = unitCell !== undefined && !isBlank(unitCell) ? parseUnit(unitCell) : null
    const unitInfo = fromRow ?? split?.unit ?? null
    const name = split?.name ?? null
    const firstValue = input.rows.map(r => r[c]).find(f => !isBlank(f))
    let quantity: ColumnQuantity = unitInfo?.quantity ?? 'unknown'
    let basis: Column['basis'] = unitInfo !== null ? 'unit' : 'none'
    if (unitInfo === null && name !== null) {
      basis = 'name'
      if (MATH_NAME.test(name)) quantity = 'other'
      else if (INDEX_NAME.test(name)) quantity = 'index'
      else if (TIME_NAME.test(name)) quantity = 'time'
      else if (CURRENT_NAME.test(name)) quantity = 'current'
      else if (VOLTAGE_NAME.test(name)) quantity = 'voltage'
      else basis = 'none'
    }
    if (isDateTime(firstValue)) {
      quantity = 'time'
      basis = 'unit'
    }
    const note = split?.note ? parseQuantity(split.note, input.decimalComma) : null
    columns.push({
      index: c,
      name,
      unit: fromRow !== null ? unitCell!.trim() : split?.unitText ?? null,
      quantity,
      basis,
      unitInfo,
      asVoltage: false,
      asCurrent: false,
      // A number in the unit row is metadata sitting under its name, not a channel's unit.
      hasData: firstValue !== undefined && !(unitCell !== undefined && input.isNumeric(unitCell)),
      sample: firstValue === undefined ? null : firstValue.trim().slice(0, 24),
      ...(note !== null && note.value > 0 && note.kind !== 'plain' ? { interval: note.kind === 'rate' ? 1 / note.value : note.value } : {}),
    })
  }
  return { columns, hasHeader: header !== null || unitRow !== null }
}

const label = (c: Column): string => (c.name ? `"${c.name}"` : `column ${c.index + 1}`) + (c.unit ? ` (${c.unit})` : '')

function pickTime(channels: Column[], hasHeader: boolean, meta: Metadata): Column | null {
  const byUnit = channels.find(c => c.basis === 'unit' && (c.quantity === 'time' || c.quantity === 'index'))
  if (byUnit) return byUnit
  const byName = channels.find(c => c.basis === 'name' && (c.quantity === 'time' || c.quantity === 'index'))
  if (byName) return byName
  // A lone column of readings, its time from the stated interval.
  if (channels.length === 1 && meta.interval !== undefined) return null
  const first = channels[0]
  if (first && (!hasHeader || first.quantity === 'unknown') && channels.length >= 2) return first
  return null
}

function ambiguous(columns: Column[], why: string): CaptureFormatError {
  const others = columns.filter(c => c.hasData && c.quantity === 'other')
  const neither = others.length ? `; ${others.map(label).join(', ')} ${others.length === 1 ? 'is' : 'are'} neither` : ''
  return new CaptureFormatError(
    'AMBIGUOUS_COLUMNS',
    `${why}${neither}: choose which column is the voltage at the load and which, if any, is the current`,
    { columns: columns.filter(c => c.hasData).map(({ index, name, unit, quantity, asVoltage, asCurrent, sample }) => ({ index, name, unit, quantity, asVoltage, asCurrent, sample })) },
  )
}

/** The voltage and current columns: the technician's choice, or what header and units make certain. */
function pickChannels(columns: Column[], rest: Column[], hasHeader: boolean, choice: ColumnChoice | undefined): { voltage: Column, current: Column | null } {
  const of = (q: ColumnQuantity, basis: Column['basis']) => rest.filter(c => c.quantity === q && c.basis === basis)
  const plain = rest.filter(c => c.quantity === 'unknown')
  const voltageSet = of('voltage', 'unit').length ? of('voltage', 'unit') : of('voltage', 'name')
  const currentSet = of('current', 'unit').length ? of('current', 'unit') : of('current', 'name')
  for (const c of rest) {
    c.asVoltage = c.quantity === 'voltage' || c.quantity === 'unknown'
    c.asCurrent = c.quantity === 'current' || c.quantity === 'unknown'
  }
  if (choice !== undefined) return chosen(columns, choice)
  if (!hasHeader) {
    // No header and no units: time, voltage and current by position, as plain exports write them.
    if (rest.length <= 2) return { voltage: rest[0]!, current: rest[1] ?? null }
    throw ambiguous(columns, `the file names none of its ${rest.length + 1} columns`)
  }
  let voltage: Column | null = voltageSet.length === 1 ? voltageSet[0]! : null
  if (voltageSet.length === 0 && plain.length === 1 && currentSet.length <= 1) voltage = plain[0]!
  const current = currentSet.length === 1 ? currentSet[0]! : null
  const left = rest.filter(c => c !== voltage && c !== current && (c.asVoltage || c.asCurrent))
  if (voltage !== null && currentSet.length <= 1 && left.length === 0) return { voltage, current }
  if (!rest.some(c => c.asVoltage)) {
    throw new CaptureFormatError('NO_NUMERIC_COLUMNS', `no column holds a voltage (${rest.map(label).join(', ')}): export the voltage channel, in V or mV`)
  }
  if (voltageSet.length > 1) throw ambiguous(columns, `${voltageSet.length} columns could be the voltage at the load (${voltageSet.map(label).join(', ')})`)
  if (currentSet.length > 1) throw ambiguous(columns, `${currentSet.length} columns could be the current (${currentSet.map(label).join(', ')})`)
  const unsure = voltage === null ? rest.filter(c => c.asVoltage) : left
  throw ambiguous(columns, `the file does not say what ${unsure.map(label).join(', ')} ${unsure.length === 1 ? 'holds' : 'hold'}`)
}

function chosen(columns: Column[], choice: ColumnChoice): { voltage: Column, current: Column | null } {
  const voltage = columns[choice.voltage]
  if (voltage === undefined || !voltage.asVoltage) {
    throw new CaptureFormatError('BAD_COLUMN_CHOICE', `column ${choice.voltage + 1} cannot be the load voltage: choose one of ${columns.filter(c => c.asVoltage).map(label).join(', ')}`, { field: 'voltageColumn' })
  }
  if (choice.current === null) return { voltage, current: null }
  const current = columns[choice.current]
  if (current === undefined || !current.asCurrent || current === voltage) {
    throw new CaptureFormatError('BAD_COLUMN_CHOICE', `column ${choice.current + 1} cannot be the current: choose one of ${columns.filter(c => c.asCurrent && c !== voltage).map(label).join(', ') || 'none'}`, { field: 'currentColumn' })
  }
  return { voltage, current }
}

function scaleOf(unit: UnitInfo | null | undefined): number {
  return unit?.scale ?? 1
}

export function planColumns(input: PlanInput): ColumnPlan {
  const { meta } = input
  const { columns, hasHeader } = describeColumns(input)
  const channels = columns.filter(c => c.hasData)
  const time = pickTime(channels, hasHeader, meta)
  const rest = channels.filter(c => c !== time && c.quantity !== 'other' && c.quantity !== 'time' && c.quantity !== 'index')
  if (rest.length === 0) {
    throw new CaptureFormatError('NO_NUMERIC_COLUMNS', 'only one numeric column in the file; a capture needs time and voltage: export the time column too, or keep the header lines that state the sample interval or rate')
  }
  const { voltage, current } = pickChannels(columns, rest, hasHeader, input.choice)

  const interval = time?.interval ?? meta.interval
  let timeKind: Layout['timeKind'] = 'seconds'
  if (time === null) timeKind = 'row'
  else if (isDateTime(time.sample ?? undefined)) timeKind = 'date_time'
  else if (time.quantity === 'index') timeKind = 'index'
  if ((timeKind === 'index' || timeKind === 'row') && interval === undefined) {
    throw new CaptureFormatError(
      'NO_TIME_AXIS',
      `${time ? `${label(time)} counts samples` : 'the file has no time column'} and states no sample rate or interval: keep the header lines with the sample rate in the export, or export a time column`,
    )
  }
  const timeUnit = timeKind === 'seconds' ? (time?.unitInfo?.quantity === 'time' ? time.unitInfo : meta.timeUnit ?? null) : null
  const voltageUnit = voltage.unitInfo ?? meta.voltageUnit ?? null
  const currentUnit = current ? current.unitInfo ?? meta.currentUnit ?? null : null
  const plan: ColumnPlan = {
    layout: {
      timeCol: time?.index ?? null,
      timeKind,
      timeScale: scaleOf(timeUnit),
      start: meta.start ?? 0,
      interval: interval ?? 0,
      voltageCol: voltage.index,
      voltageScale: scaleOf(voltageUnit),
      currentCol: current?.index ?? null,
      currentScale: scaleOf(currentUnit),
    },
    columns: {
      time: { index: time?.index ?? null, name: time?.name ?? null },
      voltage: { index: voltage.index, name: voltage.name },
      ...(current ? { current: { index: current.index, name: current.name } } : {}),
    },
    units: {
      time: (timeUnit?.label ?? 's') as TimeUnit,
      voltage: (voltageUnit?.label ?? 'V') as VoltageUnit,
      ...(current ? { current: (currentUnit?.label ?? 'A') as CurrentUnit } : {}),
    },
    timeSource: timeKind === 'date_time' ? 'date_time' : timeKind === 'seconds' ? 'column' : 'sample_interval',
  }
  if (interval !== undefined) plan.sampleIntervalS = interval
  return plan
}
