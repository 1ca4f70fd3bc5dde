import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export type IngestSource = 'drop' | 'upload' | 'push';
export type IngestStatus = 'running' | 'succeeded' | 'rejected' | 'failed';

/** One attempt to take in a file or request; the content hash makes a repeated file recognisable. */
export class IngestRun extends Model<InferAttributes<IngestRun>, InferCreationAttributes<IngestRun>> {
  declare id: CreationOptional<number>;
  declare seriesId: number | null;
  declare source: IngestSource;
  declare fileName: string | null;
  declare contentHash: string | null;
  declare status: IngestStatus;
  declare rowsRead: CreationOptional<number>;
  declare accepted: CreationOptional<number>;
  declare duplicates: CreationOptional<number>;
  declare replaced: CreationOptional<number>;
  declare rejected: CreationOptional<number>;
  /** Per-row rejections and parse facts: `{ rejectedRows: [{ line, column, reason }], ... }`. */
  declare report: CreationOptional<Record<string, unknown>>;
  declare message: CreationOptional<string>;
  declare durationMs: number | null;
  declare userId: number | null;
  declare tokenId: number | null;
  declare startedAt: Date;
  declare finishedAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    IngestRun.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: true },
        source: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [['drop', 'upload', 'push']] } },
        fileName: { type: DataTypes.STRING, allowNull: true },
        contentHash: { type: DataTypes.STRING, allowNull: true },
        status: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [['running', 'succeeded', 'rejected', 'failed']] } },
        rowsRead: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        accepted: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        duplicates: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        replaced: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        rejected: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        report: { type: DataTypes.JSON, allowNull: false, defaultValue: {} },
        message: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        durationMs: { type: DataTypes.INTEGER, allowNull: true },
        userId: { type: DataTypes.INTEGER, allowNull: true },
        tokenId: { type: DataTypes.INTEGER, allowNull: true },
        startedAt: { type: DataTypes.DATE, allowNull: false },
        finishedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'ingest_runs' },
    );
  }
}
