import { Op, type WhereOptions } from 'sequelize'
import type { RecordListQuery } from '../../../shared/types/records'
import { neutraliseCell } from '../../../shared/utils/csv'
import { RepairRecord } from '../../db'
import { RECORD_SORT, listItems, recordWhere } from './listing'

// The records export: the list's filter and order, as CSV a spreadsheet opens safely.

export const CSV_COLUMNS = [
  'id', 'status', 'procedure', 'device_type', 'symptoms', 'model', 'serial', 'job_ref', 'technician',
  'confirmed_cause', 'cause_procedure', 'cause_key', 'outcome', 'minutes', 'parts_cost_eur', 'replacement_cost_eur',
  'comeback', 'started_at', 'closed_at',
] as const

/**
 * After the last row of a page, the rows that come next in this order: later in the sort column,
 * or equal there and further on by id. MariaDB puts NULLs first when ascending and last when
 * descending, and the condition follows it, so no row is skipped or repeated between pages.
 */
function after(col: string, dir: 'ASC' | 'DESC', last: RepairRecord): WhereOptions {
  const value = last.get(col) as unknown
  const beyond = dir === 'ASC' ? Op.gt : Op.lt
  const nextId = { id: { [beyond]: last.id } }
  if (value === null) {
    return dir === 'ASC' ? { [Op.or]: [{ [col]: null, ...nextId }, { [col]: { [Op.ne]: null } }] } : { [col]: null, ...nextId }
  }
  const further: WhereOptions[] = [{ [col]: { [beyond]: value } }, { [col]: value, ...nextId }]
  if (dir === 'DESC') further.push({ [col]: null })
  return { [Op.or]: further }
}

/** Yields CSV rows for the filter in the chosen order, a page at a time, so an export never sits in memory whole. */
export async function* recordCsvRows(q: Omit<RecordListQuery, 'page' | 'pageSize'>): AsyncGenerator<Array<string | number>> {
  const where = await recordWhere(q)
  const [col, dir] = RECORD_SORT[q.sort]
  let last: RepairRecord | undefined
  for (;;) {
    const rows = await RepairRecord.findAll({ where: last ? { [Op.and]: [where, after(col, dir, last)] } : where, order: [[col, dir], ['id', dir]], limit: 500 })
    if (!rows.length) return
    for (const item of await listItems(rows)) {
      const [causeProcedure = '', causeKey = ''] = item.confirmedCause ? item.confirmedCause.id.split(':') : []
      const row: Array<string | number> = [
        item.id, item.status, item.procedure?.slug ?? '', item.deviceType.slug, item.symptoms.map(s => s.slug).join('|'),
        item.unit.model, item.unit.serial, item.unit.jobRef, item.technician.name,
        item.confirmedCause?.label ?? '', causeProcedure, causeKey, item.outcome ?? '', item.minutes ?? '',
        item.partsCost.toFixed(2), item.replacementCost?.toFixed(2) ?? '', item.comeback ? 'yes' : 'no', item.startedAt, item.closedAt ?? '',
      ]
      // Every text cell, not only the free-text ones: a name or a slug can begin with a sign too.
      yield row.map(v => (typeof v === 'string' ? neutraliseCell(v) : v))
    }
    last = rows[rows.length - 1]
  }
}
