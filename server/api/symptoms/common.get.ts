import { QueryTypes } from 'sequelize'
import { useDb } from '../../db'

// The team's most common symptoms (by repair records), for the search page's empty state.
export default defineEventHandler(async (event) => {
  await requireUser(event)
  const rows = await useDb().query<{ slug: string, name: string, n: number }>(
    `SELECT s.slug AS slug, s.name AS name, COUNT(rs.record_id) AS n
     FROM symptoms s LEFT JOIN record_symptoms rs ON rs.symptom = s.slug
     WHERE s.status = 'accepted' GROUP BY s.id ORDER BY n DESC, s.name ASC LIMIT 8`,
    { type: QueryTypes.SELECT },
  )
  return { data: rows.map(r => ({ slug: r.slug, name: r.name, records: Number(r.n) })) }
})
