import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** A named claim on a piece of work (a file, a series' analysis) held by one process until it expires. */
export class Lease extends Model<InferAttributes<Lease>, InferCreationAttributes<Lease>> {
  declare name: string;
  declare holder: string;
  declare expiresAt: number;

  static initModel(sequelize: Sequelize): void {
    Lease.init(
      {
        name: { type: DataTypes.STRING, primaryKey: true },
        holder: { type: DataTypes.STRING, allowNull: false },
        expiresAt: { type: DataTypes.BIGINT, allowNull: false },
      },
      { sequelize, tableName: 'leases', timestamps: false },
    );
  }
}
