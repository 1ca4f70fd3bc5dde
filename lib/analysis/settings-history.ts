import 'server-only';
import { SettingsChange, User, db } from '@/models';

/** One saved change of a series' settings, as the workbench and its API carry it. */
export interface SettingsHistoryEntry {
  id: number;
  settings: Record<string, unknown>;
  /** ISO 8601 */
  changedAt: string;
  changedBy: { id: number; name: string } | null;
  /** why the lead changed them; null when no reason was given */
  reason: string | null;
}

/** Who saved which analysis settings on a series, when and why, newest first. */
export async function fetchSettingsHistory(seriesId: number, limit = 50): Promise<SettingsHistoryEntry[]> {
  await db();
  const rows = await SettingsChange.findAll({
    where: { seriesId },
    include: [{ model: User, as: 'author', attributes: ['id', 'name'] }],
    order: [['id', 'DESC']],
    limit,
  });
  return rows.map((row) => {
    const author = (row as SettingsChange & { author?: User | null }).author;
    return {
      id: row.id,
      settings: row.settings,
      changedAt: row.createdAt.toISOString(),
      changedBy: author ? { id: author.id, name: author.name } : null,
      reason: row.reason ?? null,
    };
  });
}
