import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('change_log', {
    id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
    kind: { type: DataTypes.ENUM('procedure', 'vocabulary', 'evidence'), allowNull: false },
    procedure_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('change_log')
}
