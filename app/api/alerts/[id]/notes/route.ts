import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { noteSchema } from '@/lib/schemas/alert';
import { addNote } from '@/lib/alerts/notes';

export const POST = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('analyst');
  const id = idParam((await params).id, 'Alert');
  const note = await addNote(id, await readJson(request, noteSchema), actor);
  return NextResponse.json({ id: note.id, alertId: note.alertId, body: note.body, authorId: note.authorId, createdAt: note.createdAt }, { status: 201 });
});
