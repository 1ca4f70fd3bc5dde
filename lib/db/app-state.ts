import { AppState, db } from '@/models';

export async function readAppState(key: string): Promise<{ value: string; updatedAt: Date } | null> {
  await db();
  const row = await AppState.findByPk(key);
  return row ? { value: row.value, updatedAt: row.updatedAt } : null;
}

export async function writeAppState(key: string, value: string): Promise<void> {
  await db();
  await AppState.upsert({ key, value, updatedAt: new Date() });
}
