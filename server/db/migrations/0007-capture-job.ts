import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize'

// A capture belongs to the job: the step of its record it was taken for, and its cut type kept
// beside the features so the list of captures filters on it with an index.
export async function up({ context: q }: { context: QueryInterface }) {
  await q.addColumn('captures', 'step_key', { type: DataTypes.STRING(40), allowNull: true })
  await q.addColumn('captures', 'cut_type', { type: DataTypes.STRING(20), allowNull: true })
  await q.sequelize.query('UPDATE captures SET cut_type = JSON_UNQUOTE(JSON_EXTRACT(features, \'$.cutType\'))', { type: QueryTypes.UPDATE })
  await q.addIndex('captures', ['created_at'], { name: 'captures_created' })
  await q.addIndex('captures', ['cut_type', 'created_at'], { name: 'captures_cut_created' })
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.removeIndex('captures', 'captures_cut_created')
  await q.removeIndex('captures', 'captures_created')
  // Typed rather than through removeColumn, whose untyped look-up of foreign keys the mariadb 3.5
  // driver's answer breaks (DEVELOPERS.md, raw SQL).
  await q.sequelize.query('ALTER TABLE captures DROP COLUMN cut_type, DROP COLUMN step_key', { type: QueryTypes.UPDATE })
}
