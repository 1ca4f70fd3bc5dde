import type { Transaction } from 'sequelize';
import { AnalysisSnapshot, Lease, Series, db } from '@/models';
import { config, cronSetting } from '@/lib/runtime/config';
import { PROCESS_HOLDER, withLease } from '@/lib/db/leases';
import { ClaimLostError, pruneSnapshotCurves, refreshSeriesAnalysis, unjudgedLatestSnapshots } from '@/lib/analysis/snapshot';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { refreshSiteAnalyses } from '@/lib/sites/analysis';
import { evaluateSiteRules } from '@/lib/alerts/site-rules';
import type { ScheduledJob } from './types';

/**
 * One analysis cycle: every series marked `needsAnalysis` gets a fresh snapshot, under a per-series lease so two
 * schedulers never analyse one series at once; one scheduler analyses up to ANALYSIS_CONCURRENCY series at a time
 * (their surrogates run in worker threads, their reads and writes overlap). A series is re-read under its lease and
 * skipped if another scheduler analysed it meanwhile. The flag is cleared in the snapshot's own transaction, and only
 * if no data arrived while the engine ran (dataChangedAt unchanged); otherwise the next cycle analyses again. All
 * fresh snapshots, plus any latest snapshot a rule has not judged yet (a crash before evaluation, a rule added
 * since, another scheduler's), are then judged together. Sites with a member
 * newer than their site-level snapshot are then analysed again (lib/sites/analysis.ts).
 */
export async function runAnalysisCycle(): Promise<{ analysed: number; snapshots: AnalysisSnapshot[] }> {
  await db();
  const settings = config();
  const leaseMs = settings.ANALYSIS_LEASE_SECONDS * 1000;
  const due = await Series.findAll({ where: { needsAnalysis: true, retiredAt: null }, attributes: ['id'], order: [['id', 'ASC']] });
  const fresh: AnalysisSnapshot[] = [];
  let next = 0;
  const worker = async () => {
    while (next < due.length) {
      const { id } = due[next++];
      const lease = `analysis:${id}`;
      const snapshot = await withLease(lease, leaseMs, async () => {
        const series = await Series.findByPk(id);
        if (!series || !series.needsAnalysis) return null;
        // Renewed in the snapshot's transaction: false once another scheduler took the lapsed lease over.
        const stillClaimed = async (transaction: Transaction) => {
          const [renewed] = await Lease.update({ expiresAt: Date.now() + leaseMs }, { where: { name: lease, holder: PROCESS_HOLDER }, transaction });
          return renewed === 1;
        };
        try {
          const result = await refreshSeriesAnalysis(series, { parallel: true, markAnalysed: { stillClaimed } });
          await pruneSnapshotCurves(id);
          return result;
        } catch (error) {
          if (error instanceof ClaimLostError) return null;
          throw error;
        }
      });
      if (snapshot) fresh.push(snapshot);
    }
  };
  // Every worker finishes before the cycle ends (a cycle never overlaps itself); the first failure is then raised.
  const outcomes = await Promise.allSettled(Array.from({ length: Math.min(settings.ANALYSIS_CONCURRENCY, due.length) }, worker));
  const failed = outcomes.find((o): o is PromiseRejectedResult => o.status === 'rejected');
  if (failed) throw failed.reason;
  const freshIds = new Set(fresh.map((s) => s.id));
  const pending = (await unjudgedLatestSnapshots()).filter((s) => !freshIds.has(s.id));
  const judged = [...fresh, ...pending];
  if (judged.length) await evaluateSnapshots(judged);
  // Sites whose member series got a new snapshot (this cycle or one that stopped early) get their site-level one,
  // and site rules are judged on each site's latest (any not judged yet, as after a scheduler that died here).
  await refreshSiteAnalyses();
  await evaluateSiteRules();
  return { analysed: fresh.length, snapshots: fresh };
}

export const analysisJob: ScheduledJob = {
  name: 'analysis',
  schedule: () => cronSetting('ANALYSIS_CRON'),
  run: async () => {
    await runAnalysisCycle();
  },
};
