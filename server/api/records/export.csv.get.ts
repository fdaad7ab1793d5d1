import { Readable } from 'node:stream'
import { stringify } from 'csv-stringify'
import { RecordListQuery } from '#shared/types/records'
import { CSV_COLUMNS, recordCsvRows } from '../../services/records/export'

// Streamed: rows are read a page at a time, in the list's order, and written as they come.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const { page: _p, pageSize: _z, ...filters } = await getValidatedQuery(event, parseWith(RecordListQuery))
  setResponseHeaders(event, {
    'Content-Type': 'text/csv; charset=utf-8',
    'Content-Disposition': `attachment; filename="benchlore-records-${new Date().toISOString().slice(0, 10)}.csv"`,
    'Cache-Control': 'no-store',
  })
  const csv = Readable.from(recordCsvRows(filters)).pipe(stringify({ header: true, columns: [...CSV_COLUMNS] }))
  return sendStream(event, csv as unknown as ReadableStream)
})
