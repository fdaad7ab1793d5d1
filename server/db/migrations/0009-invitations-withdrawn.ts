import { DataTypes, QueryTypes, type QueryInterface } from 'sequelize'

// An invitation withdrawn by an admin (directly, or by changing the invitee's role or
// deactivating them before they accepted) can no longer be accepted. Mail may carry an HTML part
// beside its text, so a link in it can be followed with one click.
export async function up({ context: q }: { context: QueryInterface }) {
  await q.addColumn('invitations', 'revoked_at', { type: DataTypes.DATE, allowNull: true })
  await q.addColumn('outbox_messages', 'html_body', { type: DataTypes.TEXT, allowNull: true })
}

export async function down({ context: q }: { context: QueryInterface }) {
  // Typed rather than through removeColumn, whose untyped look-up of foreign keys the mariadb 3.5
  // driver's answer breaks (DEVELOPERS.md, raw SQL).
  await q.sequelize.query('ALTER TABLE outbox_messages DROP COLUMN html_body', { type: QueryTypes.UPDATE })
  await q.sequelize.query('ALTER TABLE invitations DROP COLUMN revoked_at', { type: QueryTypes.UPDATE })
}
