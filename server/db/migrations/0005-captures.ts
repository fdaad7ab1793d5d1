import { DataTypes, type QueryInterface } from 'sequelize'

const id = { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true }
const ref = (table: string, allowNull: boolean) => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull, references: { model: table, key: 'id' } })

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('captures', {
    id,
    attachment_id: ref('attachments', false),
    samples_key: { type: DataTypes.STRING(200), allowNull: false },
    label: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
    record_id: ref('repair_records', true),
    uploaded_by_id: ref('users', false),
    features: { type: DataTypes.JSON, allowNull: false },
    analysis: { type: DataTypes.JSON, allowNull: false },
    overview: { type: DataTypes.JSON, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await q.createTable('signature_references', {
    id,
    capture_id: ref('captures', false),
    procedure_id: ref('procedures', false),
    step_key: { type: DataTypes.STRING(40), allowNull: true },
    symptom: { type: DataTypes.STRING(80), allowNull: true },
    kind: { type: DataTypes.ENUM('good', 'fault'), allowNull: false },
    note: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
    created_by_id: ref('users', false),
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await q.addIndex('signature_references', ['procedure_id'])
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('signature_references')
  await q.dropTable('captures')
}
