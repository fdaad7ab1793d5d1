import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize'

// Which revision or record shows which stored file: the file route answers a person only for
// files they may see through one of these (or uploaded themselves), so a file's id is never
// enough on its own. Filled here from the revisions' step images and the records' photos.
export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('attachment_uses', {
    attachment_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true, references: { model: 'attachments', key: 'id' } },
    owner_type: { type: DataTypes.ENUM('revision', 'record'), allowNull: false, primaryKey: true },
    owner_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
  })
  await q.addIndex('attachment_uses', ['owner_type', 'owner_id'])

  const known = new Set((await q.sequelize.query<{ id: number }>('SELECT id FROM attachments', { type: QueryTypes.SELECT })).map(a => a.id))
  const rows: Array<{ attachment_id: number, owner_type: 'revision' | 'record', owner_id: number }> = []
  const add = (type: 'revision' | 'record', ownerId: number, ids: unknown) => {
    for (const id of new Set(Array.isArray(ids) ? ids : [])) if (typeof id === 'number' && known.has(id)) rows.push({ attachment_id: id, owner_type: type, owner_id: ownerId })
  }
  const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v) as unknown
  const revisions = await q.sequelize.query<{ id: number, images: unknown }>(
    `SELECT id, JSON_EXTRACT(content, '$.steps[*].imageIds') AS images FROM revisions WHERE JSON_CONTAINS_PATH(content, 'one', '$.steps[*].imageIds')`,
    { type: QueryTypes.SELECT },
  )
  for (const r of revisions) add('revision', r.id, ((parse(r.images) ?? []) as unknown[]).flat())
  const records = await q.sequelize.query<{ id: number, photo_ids: unknown }>(
    `SELECT id, photo_ids FROM repair_records WHERE JSON_LENGTH(photo_ids) > 0`,
    { type: QueryTypes.SELECT },
  )
  for (const r of records) add('record', r.id, parse(r.photo_ids))
  for (let i = 0; i < rows.length; i += 1000) await q.bulkInsert('attachment_uses', rows.slice(i, i + 1000))
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('attachment_uses')
}
