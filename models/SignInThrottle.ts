import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** Failed sign-in counts per key (`account:<email>` or `address:<ip>`), shared by every process. */
export class SignInThrottle extends Model<InferAttributes<SignInThrottle>, InferCreationAttributes<SignInThrottle>> {
  declare key: string;
  declare failures: number;
  declare windowStartedAt: number;
  declare lockedUntil: number | null;

  static initModel(sequelize: Sequelize): void {
    SignInThrottle.init(
      {
        key: { type: DataTypes.STRING, primaryKey: true },
        failures: { type: DataTypes.INTEGER, allowNull: false },
        windowStartedAt: { type: DataTypes.BIGINT, allowNull: false },
        lockedUntil: { type: DataTypes.BIGINT, allowNull: true },
      },
      { sequelize, tableName: 'sign_in_throttle', timestamps: false },
    );
  }
}
