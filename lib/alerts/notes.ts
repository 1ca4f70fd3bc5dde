import 'server-only';
import { Alert, Note, NoteRevision, writeTransaction } from '@/models';
import { ForbiddenError, NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { noteSchema } from '@/lib/schemas/alert';

export async function addNote(alertId: number, input: { body: string }, actor: Actor): Promise<Note> {
  const { body } = noteSchema.parse(input);
  return writeTransaction(async (transaction) => {
    if (!(await Alert.findByPk(alertId, { transaction, attributes: ['id'] }))) throw new NotFoundError('Alert');
    const note = await Note.create({ alertId, authorId: actor.id, body }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'note.add', entity: 'note', entityId: note.id, details: { alertId } }, transaction);
    return note;
  });
}

/** Only the author may edit a note, and the earlier wording is kept as a revision: an edit is never silent. */
export async function editNote(noteId: number, input: { body: string }, actor: Actor): Promise<Note> {
  const { body } = noteSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const note = await Note.findByPk(noteId, { transaction });
    if (!note) throw new NotFoundError('Note');
    if (note.authorId !== actor.id) throw new ForbiddenError('Only the author can edit a note; add a note of your own instead.');
    if (note.body === body) return note;
    await NoteRevision.create({ noteId, body: note.body, editedBy: actor.id }, { transaction });
    await note.update({ body }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'note.edit', entity: 'note', entityId: noteId, details: { alertId: note.alertId } }, transaction);
    return note;
  });
}
