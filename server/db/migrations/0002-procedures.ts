import { DataTypes, type QueryInterface } from 'sequelize'

const id = { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true }
const userRef = (allowNull: boolean) => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull, references: { model: 'users', key: 'id' } })
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
}
const STATES = ['draft', 'in_review', 'published', 'superseded', 'changes_requested', 'rejected']

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('device_types', {
    id,
    slug: { type: DataTypes.STRING(80), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false, unique: true },
    description: { type: DataTypes.TEXT, allowNull: false },
    ...timestamps,
  })
  await q.createTable('symptoms', {
    id,
    slug: { type: DataTypes.STRING(80), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(120), allowNull: false, unique: true },
    description: { type: DataTypes.TEXT, allowNull: false },
    synonyms: { type: DataTypes.JSON, allowNull: false },
    status: { type: DataTypes.ENUM('accepted', 'proposed', 'merged'), allowNull: false, defaultValue: 'accepted' },
    merged_into_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'symptoms', key: 'id' } },
    proposed_by_id: userRef(true),
    ...timestamps,
  })
  await q.createTable('procedures', {
    id,
    slug: { type: DataTypes.STRING(100), allowNull: false, unique: true },
    status: { type: DataTypes.ENUM('active', 'retired'), allowNull: false, defaultValue: 'active' },
    published_revision_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    last_number: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    created_by_id: userRef(false),
    retired_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await q.createTable('revisions', {
    id,
    procedure_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'procedures', key: 'id' } },
    number: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    state: { type: DataTypes.ENUM(...STATES), allowNull: false, defaultValue: 'draft' },
    author_id: userRef(false),
    content: { type: DataTypes.JSON, allowNull: false },
    change_note: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
    base_revision_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true, references: { model: 'revisions', key: 'id' } },
    reviewer_id: userRef(true),
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
    submitted_at: { type: DataTypes.DATE, allowNull: true },
    decided_at: { type: DataTypes.DATE, allowNull: true },
    published_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  // Numbers are unique per procedure (NULLs, i.e. drafts, do not collide in a unique index).
  await q.addIndex('revisions', ['procedure_id', 'number'], { unique: true, name: 'revisions_procedure_number' })
  await q.addIndex('revisions', ['state', 'submitted_at'])
  await q.addIndex('revisions', ['author_id', 'state'])
  await q.addConstraint('procedures', { type: 'foreign key', fields: ['published_revision_id'], references: { table: 'revisions', field: 'id' }, name: 'procedures_published_revision_fk' } as Parameters<QueryInterface['addConstraint']>[1])

  await q.createTable('review_comments', {
    id,
    revision_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, references: { model: 'revisions', key: 'id' } },
    author_id: userRef(false),
    body: { type: DataTypes.TEXT, allowNull: false },
    step_key: { type: DataTypes.STRING(40), allowNull: true },
    resolved: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    ...timestamps,
  })
  await q.createTable('attachments', {
    id,
    object_key: { type: DataTypes.STRING(200), allowNull: false, unique: true },
    thumbnail_key: { type: DataTypes.STRING(200), allowNull: true },
    kind: { type: DataTypes.ENUM('image', 'capture'), allowNull: false },
    mime: { type: DataTypes.STRING(80), allowNull: false },
    bytes: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    width: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    height: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    sha256: { type: DataTypes.CHAR(64), allowNull: false },
    caption: { type: DataTypes.STRING(300), allowNull: false, defaultValue: '' },
    uploaded_by_id: userRef(false),
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.removeConstraint('procedures', 'procedures_published_revision_fk')
  for (const t of ['attachments', 'review_comments', 'revisions', 'procedures', 'symptoms', 'device_types']) await q.dropTable(t)
}
