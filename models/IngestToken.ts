import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** A push credential for one series. Only the SHA-256 of the secret is kept; the secret is shown once. */
export class IngestToken extends Model<InferAttributes<IngestToken>, InferCreationAttributes<IngestToken>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare tokenHash: string;
  declare label: CreationOptional<string>;
  declare createdBy: number | null;
  declare lastUsedAt: Date | null;
  declare revokedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    IngestToken.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        tokenHash: { type: DataTypes.STRING, allowNull: false, unique: true },
        label: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        lastUsedAt: { type: DataTypes.DATE, allowNull: true },
        revokedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'ingest_tokens' },
    );
  }
}
