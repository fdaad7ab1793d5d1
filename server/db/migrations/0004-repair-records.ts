import { DataTypes, type QueryInterface } from 'sequelize'

const id = { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true }
const ref = (table: string, allowNull: boolean) => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull, references: { model: table, key: 'id' } })
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
}

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('repair_records', {
    id,
    status: { type: DataTypes.ENUM('in_progress', 'closed'), allowNull: false, defaultValue: 'in_progress' },
    procedure_id: ref('procedures', true),
    revision_id: ref('revisions', true),
    device_type: { type: DataTypes.STRING(80), allowNull: false },
    symptoms: { type: DataTypes.JSON, allowNull: false },
    unit_model: { type: DataTypes.STRING(120), allowNull: false, defaultValue: '' },
    unit_serial: { type: DataTypes.STRING(120), allowNull: false, defaultValue: '' },
    job_ref: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
    technician_id: ref('users', false),
    steps: { type: DataTypes.JSON, allowNull: false },
    notes: { type: DataTypes.TEXT, allowNull: false },
    cause_procedure_id: ref('procedures', true),
    cause_key: { type: DataTypes.STRING(40), allowNull: true },
    outcome: { type: DataTypes.ENUM('repaired', 'not_economical', 'escalated', 'no_fault_found'), allowNull: true },
    parts: { type: DataTypes.JSON, allowNull: false },
    parts_cost_cents: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    minutes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    replacement_cost_cents: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    photo_ids: { type: DataTypes.JSON, allowNull: false },
    comeback: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    started_at: { type: DataTypes.DATE, allowNull: false },
    closed_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  // Evidence aggregates scan closed records of one device type grouped by confirmed cause.
  await q.addIndex('repair_records', ['status', 'device_type', 'cause_procedure_id', 'cause_key'], { name: 'repair_records_evidence' })
  await q.addIndex('repair_records', ['cause_procedure_id', 'status'])
  await q.addIndex('repair_records', ['started_at'])
  await q.addIndex('repair_records', ['closed_at'])
  await q.addIndex('repair_records', ['technician_id', 'started_at'])

  // One row per (record, symptom): lets the evidence query count symptom co-occurrence with an index.
  await q.createTable('record_symptoms', {
    record_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true, references: { model: 'repair_records', key: 'id' }, onDelete: 'CASCADE' },
    symptom: { type: DataTypes.STRING(80), allowNull: false, primaryKey: true },
  })
  await q.addIndex('record_symptoms', ['symptom', 'record_id'])

  await q.createTable('record_amendments', {
    id,
    record_id: ref('repair_records', false),
    author_id: ref('users', false),
    reason: { type: DataTypes.STRING(1000), allowNull: false },
    changes: { type: DataTypes.JSON, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await q.createTable('step_flags', {
    id,
    revision_id: ref('revisions', false),
    step_key: { type: DataTypes.STRING(40), allowNull: false },
    kind: { type: DataTypes.ENUM('unclear', 'wrong'), allowNull: false },
    note: { type: DataTypes.STRING(2000), allowNull: false },
    raised_by_id: ref('users', false),
    resolved_by_id: ref('users', true),
    resolved_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await q.addIndex('step_flags', ['revision_id', 'resolved_at'])
}

export async function down({ context: q }: { context: QueryInterface }) {
  for (const t of ['step_flags', 'record_amendments', 'record_symptoms', 'repair_records']) await q.dropTable(t)
}
