import { SettingsChange, User, db } from '@/models';

export interface SettingsHistoryEntry {
  id: number;
  settings: Record<string, unknown>;
  changedAt: Date;
  changedBy: { id: number; name: string } | null;
}

/** Who saved which analysis settings on a series, and when, newest first. */
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
    return { id: row.id, settings: row.settings, changedAt: row.createdAt, changedBy: author ? { id: author.id, name: author.name } : null };
  });
}
