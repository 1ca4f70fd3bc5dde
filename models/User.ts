import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { ROLES, type Role } from '@/lib/auth/roles';

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare passwordHash: string | null;
  declare role: Role;
  declare active: CreationOptional<boolean>;
  /** Raised whenever the password changes; a session from before the change no longer matches and ends. */
  declare sessionVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    User.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        email: { type: DataTypes.STRING, allowNull: false, unique: true, validate: { isEmail: true } },
        name: { type: DataTypes.STRING, allowNull: false },
        passwordHash: { type: DataTypes.STRING, allowNull: true },
        role: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [[...ROLES]] } },
        active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
        sessionVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      {
        sequelize,
        tableName: 'users',
        hooks: {
          // Every way of setting a password (reset, invitation, own change) goes through here.
          beforeUpdate(user) {
            if (user.changed('passwordHash')) user.sessionVersion = (user.previous('sessionVersion') ?? user.sessionVersion) + 1;
          },
        },
      },
    );
  }
}
