import { type QueryInterface } from 'sequelize';
import { jsonText, textJson } from '@/lib/db/dialect';

/**
 * "Transition" named two things: an instant a lead marks on a record (a tipping point of the system, or a
 * maintenance break) and an alert's change of triage state. Marks get their own name:
 *
 * - table `transitions` → `marks`, and the mark kind 'transition' → 'tipping-point';
 * - stored JSON that carries the old names is rewritten in place, so results computed before the upgrade read as
 *   new ones: backtest results (`transitions` → `tippingPoints`, `openAtTransition` → `openAtTippingPoint`,
 *   `transitionAt` → `tippingPointAt`, restart reason 'transition' → 'tipping-point') and snapshot summaries and
 *   chart views (`startsAfter` 'transition' → 'tipping-point').
 *
 * The column default of `marks.kind` stays the SQL text it was given in 0008: changing a default needs a table
 * rebuild on SQLite, and the model always writes the kind itself. Audit entries keep the names they were written
 * with: the log records what happened in the words of its day.
 */
const JSON_RENAMES: [table: string, column: string, from: string, to: string][] = [
  ['backtest_jobs', 'result', '"transitions":', '"tippingPoints":'],
  ['backtest_jobs', 'result', '"openAtTransition":', '"openAtTippingPoint":'],
  ['backtest_jobs', 'result', '"transitionAt":', '"tippingPointAt":'],
  ['backtest_jobs', 'result', '"reason":"transition"', '"reason":"tipping-point"'],
  ['analysis_snapshots', 'summary', '"startsAfter":"transition"', '"startsAfter":"tipping-point"'],
  ['analysis_snapshots', 'chart_view', '"startsAfter":"transition"', '"startsAfter":"tipping-point"'],
];

async function renameInJson(q: QueryInterface, way: 'up' | 'down'): Promise<void> {
  for (const [table, column, before, after] of JSON_RENAMES) {
    const [from, to] = way === 'up' ? [before, after] : [after, before];
    const text = jsonText(q.sequelize, column);
    await q.sequelize.query(`UPDATE ${table} SET ${column} = ${textJson(q.sequelize, `REPLACE(${text}, :from, :to)`)} WHERE ${text} LIKE :like`, {
      replacements: { from, to, like: `%${from}%` },
    });
  }
}

export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.renameTable('transitions', 'marks');
  await q.sequelize.query(`UPDATE marks SET kind = 'tipping-point' WHERE kind = 'transition'`);
  await renameInJson(q, 'up');
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await renameInJson(q, 'down');
  await q.sequelize.query(`UPDATE marks SET kind = 'transition' WHERE kind = 'tipping-point'`);
  await q.renameTable('marks', 'transitions');
}
