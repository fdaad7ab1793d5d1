import { DataTypes, type QueryInterface } from 'sequelize'

const ROLES = ['technician', 'author', 'editor', 'admin']
const id = { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true }
const bigId = { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true }
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
}

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('users', {
    id,
    email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    role: { type: DataTypes.ENUM(...ROLES), allowNull: false },
    password_hash: { type: DataTypes.STRING(255), allowNull: true },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    session_version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    last_login_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })

  await q.createTable('invitations', {
    id,
    user_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    role: { type: DataTypes.ENUM(...ROLES), allowNull: false },
    token_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
    invited_by_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'users', key: 'id' } },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    accepted_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })

  await q.createTable('login_failures', {
    id: bigId,
    email: { type: DataTypes.STRING(254), allowNull: false },
    ip: { type: DataTypes.STRING(64), allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await q.addIndex('login_failures', ['email', 'created_at'])
  await q.addIndex('login_failures', ['ip', 'created_at'])

  await q.createTable('audit_events', {
    id: bigId,
    actor_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    action: { type: DataTypes.STRING(64), allowNull: false },
    entity_type: { type: DataTypes.STRING(32), allowNull: false },
    entity_id: { type: DataTypes.STRING(64), allowNull: true },
    before: { type: DataTypes.JSON, allowNull: true },
    after: { type: DataTypes.JSON, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await q.addIndex('audit_events', ['entity_type', 'entity_id'])
  await q.addIndex('audit_events', ['created_at'])

  await q.createTable('outbox_messages', {
    id: bigId,
    kind: { type: DataTypes.STRING(40), allowNull: false },
    to_address: { type: DataTypes.STRING(254), allowNull: false },
    subject: { type: DataTypes.STRING(250), allowNull: false },
    text_body: { type: DataTypes.TEXT, allowNull: false },
    status: { type: DataTypes.ENUM('pending', 'sent', 'failed'), allowNull: false, defaultValue: 'pending' },
    attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    next_attempt_at: { type: DataTypes.DATE, allowNull: false },
    last_error: { type: DataTypes.STRING(500), allowNull: true },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    locked_until: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await q.addIndex('outbox_messages', ['status', 'next_attempt_at'])
}

export async function down({ context: q }: { context: QueryInterface }) {
  for (const t of ['outbox_messages', 'audit_events', 'login_failures', 'invitations', 'users']) await q.dropTable(t)
}
