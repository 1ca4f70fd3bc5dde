import { Op } from 'sequelize';
import { AnalysisSnapshot, Series, db } from '@/models';
import { cronSetting } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { pruneSnapshotCurves, refreshSeriesAnalysis, unjudgedLatestSnapshots } from '@/lib/analysis/snapshot';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { refreshSiteAnalyses } from '@/lib/sites/analysis';
import type { ScheduledJob } from './types';

/** Long enough for a large record with thousands of surrogates; the lease is renewed while the work runs. */
const LEASE_MS = 10 * 60_000;

/**
 * One analysis cycle: every series marked `needsAnalysis` gets a fresh snapshot, under a per-series lease so two
 * schedulers never analyse one series at once. The flag is cleared only if no data arrived while the engine ran
 * (dataChangedAt unchanged); otherwise the next cycle analyses again. All fresh snapshots, plus any latest
 * snapshot a rule has not judged yet (a crash before evaluation, a rule added since), are then judged together,
 * and sites with a member newer than their site-level snapshot are analysed again (lib/sites/analysis.ts).
 */
export async function runAnalysisCycle(): Promise<{ analysed: number; snapshots: AnalysisSnapshot[] }> {
  await db();
  const due = await Series.findAll({ where: { needsAnalysis: true, retiredAt: null }, attributes: ['id'], order: [['id', 'ASC']] });
  const fresh: AnalysisSnapshot[] = [];
  for (const { id } of due) {
    const snapshot = await withLease(`analysis:${id}`, LEASE_MS, async () => {
      const series = await Series.findByPk(id);
      if (!series || !series.needsAnalysis) return null;
      const seen = series.dataChangedAt;
      const result = await refreshSeriesAnalysis(series, { parallel: true });
      await Series.update({ needsAnalysis: false }, { where: { id, needsAnalysis: true, dataChangedAt: seen === null ? { [Op.is]: null } : seen } });
      await pruneSnapshotCurves(id);
      return result;
    });
    if (snapshot) fresh.push(snapshot);
  }
  const freshIds = new Set(fresh.map((s) => s.id));
  const pending = (await unjudgedLatestSnapshots()).filter((s) => !freshIds.has(s.id));
  const judged = [...fresh, ...pending];
  if (judged.length) await evaluateSnapshots(judged);
  // Sites whose member series got a new snapshot (this cycle or one that stopped early) get their site-level one.
  await refreshSiteAnalyses();
  return { analysed: fresh.length, snapshots: fresh };
}

export const analysisJob: ScheduledJob = {
  name: 'analysis',
  schedule: () => cronSetting('ANALYSIS_CRON'),
  run: async () => {
    await runAnalysisCycle();
  },
};
