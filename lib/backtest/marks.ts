import { Transition, db } from '@/models';
import type { MarkKind } from '@/models/Transition';

/** A mark (known transition or maintenance break) as the API and the screens carry it. */
export function presentTransition(t: Transition) {
  return { id: t.id, seriesId: t.seriesId, at: Number(t.at), atIso: new Date(Number(t.at)).toISOString(), note: t.note, kind: t.kind, createdBy: t.createdBy, createdAt: t.createdAt.toISOString() };
}
export type TransitionRecord = ReturnType<typeof presentTransition>;

/**
 * Marks of a series, oldest first: by default the known transitions only (what backtests score against, so a
 * maintenance break never counts as a transition); pass both kinds for every mark.
 */
export async function listTransitions(seriesId: number, kinds: readonly MarkKind[] = ['transition']): Promise<TransitionRecord[]> {
  await db();
  const rows = await Transition.findAll({ where: { seriesId, kind: [...kinds] }, order: [['at', 'ASC'], ['id', 'ASC']] });
  return rows.map(presentTransition);
}
