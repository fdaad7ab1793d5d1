import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize'

// Running counts of confirmed causes per device type, overall ('' symptom) and per symptom the
// record listed: the evidence ranking reads a handful of rows instead of scanning records.
export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('cause_counts', {
    device_type: { type: DataTypes.STRING(80), allowNull: false, primaryKey: true },
    cause_procedure_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    cause_key: { type: DataTypes.STRING(40), allowNull: false, primaryKey: true },
    symptom: { type: DataTypes.STRING(80), allowNull: false, primaryKey: true },
    n: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
  })
  await q.addIndex('cause_counts', ['device_type', 'symptom'])
  await q.addIndex('repair_records', ['device_type', 'outcome', 'closed_at'], { name: 'repair_records_list' })
  const closed = 'r.status = \'closed\' AND r.cause_key IS NOT NULL'
  await q.sequelize.query(`INSERT INTO cause_counts (device_type, cause_procedure_id, cause_key, symptom, n)
    SELECT r.device_type, r.cause_procedure_id, r.cause_key, '', COUNT(*) FROM repair_records r WHERE ${closed} GROUP BY 1, 2, 3
    UNION ALL
    SELECT r.device_type, r.cause_procedure_id, r.cause_key, s.symptom, COUNT(*) FROM repair_records r JOIN record_symptoms s ON s.record_id = r.id WHERE ${closed} GROUP BY 1, 2, 3, 4`, { type: QueryTypes.INSERT })
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.removeIndex('repair_records', 'repair_records_list')
  await q.dropTable('cause_counts')
}
