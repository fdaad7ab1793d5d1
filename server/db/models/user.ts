import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize'
import { ROLES, type Role } from '../../../shared/types/roles'

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>
  declare email: string
  declare name: string
  declare role: Role
  /** Null until an invited person sets a password. */
  declare passwordHash: string | null
  declare active: CreationOptional<boolean>
  /** Bumped to end every session of this user at the next request (logout everywhere, role change, deactivation). */
  declare sessionVersion: CreationOptional<number>
  declare lastLoginAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>

  static initModel(sequelize: Sequelize) {
    User.init({
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      email: { type: DataTypes.STRING(254), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      role: { type: DataTypes.ENUM(...ROLES), allowNull: false },
      passwordHash: { type: DataTypes.STRING(255), allowNull: true },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      sessionVersion: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 1 },
      lastLoginAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    }, { sequelize, tableName: 'users' })
  }
}
