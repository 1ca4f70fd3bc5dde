import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { noteSchema } from '@/lib/schemas/alert';
import { editNote } from '@/lib/alerts/notes';

/** Author only; the previous wording is kept as a revision. */
export const PATCH = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('analyst');
  const id = idParam((await params).id, 'Note');
  const note = await editNote(id, await readJson(request, noteSchema), actor);
  return NextResponse.json({ id: note.id, alertId: note.alertId, body: note.body, authorId: note.authorId, updatedAt: note.updatedAt });
});
