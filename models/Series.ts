import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** How a CSV for this series is read: which columns hold time and value, and how time is written. */
export interface CsvMapping {
  timeColumn: string | number;
  valueColumn: string | number;
  timeFormat: string;
  flagColumn?: string | number;
  /** The netCDF variable a netCDF file feeds this series from, and its QC flag variable (lib/intake/netcdf). */
  variable?: string;
  flagVariable?: string;
}

export class Series extends Model<InferAttributes<Series>, InferCreationAttributes<Series>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  /** The site's name, kept beside `siteId` by lib/sites (see models/Site.ts); '' when the series has no site. */
  declare site: CreationOptional<string>;
  declare siteId: CreationOptional<number | null>;
  declare unit: CreationOptional<string>;
  declare description: CreationOptional<string>;
  /** Sampling interval in milliseconds; null when the record is irregular and kept as it comes. */
  declare intervalMs: number | null;
  declare timeZone: CreationOptional<string>;
  /** How long the series may go without new data before it is late; null = derived from the interval (lib/alerts/lateness.ts). */
  declare lateAfterMs: CreationOptional<number | null>;
  declare csvMapping: CsvMapping;
  /** Engine settings, always validated with `analysisSettingsSchema` before they are stored. */
  declare settings: Record<string, unknown>;
  /** Quality-control settings, validated with `qcConfigSchema` (lib/schemas/quality.ts); null: no automatic tests. */
  declare qc: CreationOptional<Record<string, unknown> | null>;
  declare duplicatePolicy: CreationOptional<'reject' | 'replace'>;
  declare needsAnalysis: CreationOptional<boolean>;
  declare dataChangedAt: Date | null;
  declare retiredAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Series.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, allowNull: false, unique: true },
        name: { type: DataTypes.STRING, allowNull: false },
        site: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        siteId: { type: DataTypes.INTEGER, allowNull: true, defaultValue: null },
        unit: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        intervalMs: { type: DataTypes.BIGINT, allowNull: true },
        timeZone: { type: DataTypes.STRING, allowNull: false, defaultValue: 'UTC' },
        lateAfterMs: {
          type: DataTypes.BIGINT,
          allowNull: true,
          get() {
            const v = this.getDataValue('lateAfterMs');
            return v === null || v === undefined ? null : Number(v);
          },
        },
        csvMapping: { type: DataTypes.JSON, allowNull: false },
        settings: { type: DataTypes.JSON, allowNull: false },
        qc: { type: DataTypes.JSON, allowNull: true },
        duplicatePolicy: { type: DataTypes.STRING, allowNull: false, defaultValue: 'reject', validate: { isIn: [['reject', 'replace']] } },
        needsAnalysis: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        dataChangedAt: { type: DataTypes.DATE, allowNull: true },
        retiredAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'series' },
    );
  }
}
