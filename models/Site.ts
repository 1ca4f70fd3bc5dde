import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/**
 * A place where series are measured: a lake, a mooring, a station. Series point at it through `series.site_id`;
 * each series also keeps the site's name in `series.site` (written only by lib/sites in the transaction that sets or
 * renames the site), so readers that show a name and API clients that read `site` need no join.
 */
export class Site extends Model<InferAttributes<Site>, InferCreationAttributes<Site>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare description: CreationOptional<string>;
  /** WGS 84 degrees north; null when the site has no position yet (it is then left off the map). */
  declare latitude: number | null;
  /** WGS 84 degrees east. */
  declare longitude: number | null;
  declare timeZone: CreationOptional<string>;
  declare notes: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Site.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, allowNull: false, unique: true },
        name: { type: DataTypes.STRING, allowNull: false, unique: true },
        description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        latitude: { type: DataTypes.DOUBLE, allowNull: true },
        longitude: { type: DataTypes.DOUBLE, allowNull: true },
        timeZone: { type: DataTypes.STRING, allowNull: false, defaultValue: 'UTC' },
        notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'sites' },
    );
  }
}
