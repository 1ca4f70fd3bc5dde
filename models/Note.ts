import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class Note extends Model<InferAttributes<Note>, InferCreationAttributes<Note>> {
  declare id: CreationOptional<number>;
  declare alertId: number;
  declare authorId: number;
  declare body: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Note.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        alertId: { type: DataTypes.INTEGER, allowNull: false },
        authorId: { type: DataTypes.INTEGER, allowNull: false },
        body: { type: DataTypes.TEXT, allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'notes' },
    );
  }
}

/** Earlier wording of an edited note, so an edit is never silent. */
export class NoteRevision extends Model<InferAttributes<NoteRevision>, InferCreationAttributes<NoteRevision>> {
  declare id: CreationOptional<number>;
  declare noteId: number;
  declare body: string;
  declare editedBy: number;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    NoteRevision.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        noteId: { type: DataTypes.INTEGER, allowNull: false },
        body: { type: DataTypes.TEXT, allowNull: false },
        editedBy: { type: DataTypes.INTEGER, allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'note_revisions' },
    );
  }
}
