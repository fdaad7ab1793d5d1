import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'

/** One failed sign-in. Kept in the database so throttling holds across app instances and restarts. */
export class LoginFailure extends Model<InferAttributes<LoginFailure>, InferCreationAttributes<LoginFailure>> {
  declare id: CreationOptional<number>
  declare email: string
  declare ip: string
  declare createdAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    LoginFailure.init({
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false },
      ip: { type: DataTypes.STRING(64), allowNull: false },
      createdAt: DataTypes.DATE,
    }, { sequelize, tableName: 'login_failures', updatedAt: false })
  }
}
