import { Mark, db } from '@/models';
import type { MarkKind } from '@/lib/marks/kinds';

/** A mark (marked tipping point or maintenance break) as the API and the screens carry it. */
export function presentMark(t: Mark) {
  return {
    id: t.id,
    seriesId: t.seriesId,
    at: Number(t.at),
    atIso: new Date(Number(t.at)).toISOString(),
    note: t.note,
    kind: t.kind,
    createdBy: t.createdBy,
    createdAt: t.createdAt.toISOString(),
  };
}
export type MarkRecord = ReturnType<typeof presentMark>;

/**
 * Marks of a series, oldest first: by default the marked tipping points only (what backtests score against, so a
 * maintenance break never counts as a tipping point); pass both kinds for every mark.
 */
export async function listMarks(seriesId: number, kinds: readonly MarkKind[] = ['tipping-point']): Promise<MarkRecord[]> {
  await db();
  const rows = await Mark.findAll({
    where: { seriesId, kind: [...kinds] },
    order: [
      ['at', 'ASC'],
      ['id', 'ASC'],
    ],
  });
  return rows.map(presentMark);
}
