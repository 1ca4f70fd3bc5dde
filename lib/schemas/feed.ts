import { z } from 'zod';
import { slugSchema, TIME_FORMATS } from './series';

const columnName = z.string().trim().min(1).max(200);

/**
 * A station feed: one file layout mapped onto several series. `columns` maps each value column of the file to the
 * slug of the series it feeds; `flagColumns` maps a value column to the column holding its QARTOD flag. Column
 * names match the file's header ignoring ASCII case.
 */
export const feedCreateSchema = z
  .object({
    slug: slugSchema,
    name: z.string().trim().min(1).max(200),
    timeColumn: columnName,
    timeFormat: z.enum(TIME_FORMATS).default('iso8601'),
    columns: z
      .record(columnName, slugSchema)
      .refine((columns) => Object.keys(columns).length >= 1, 'Map at least one column to a series.')
      .refine((columns) => Object.keys(columns).length <= 200, 'A feed maps at most 200 columns.')
      .refine((columns) => new Set(Object.values(columns)).size === Object.keys(columns).length, 'Each series can be fed by one column only.'),
    flagColumns: z.record(columnName, columnName).default({}),
    /** A column whose filled cells mark a maintenance visit, sensor swap or recalibration on every series of the feed. */
    maintenanceColumn: columnName.nullable().default(null),
  })
  .strict()
  .superRefine((feed, context) => {
    const lower = (name: string) => name.toLowerCase();
    const valueColumns = new Set(Object.keys(feed.columns).map(lower));
    if (valueColumns.has(lower(feed.timeColumn))) {
      context.addIssue({ code: 'custom', path: ['columns'], message: `"${feed.timeColumn}" is the time column; it cannot also be a value column.` });
    }
    const taken = new Set([lower(feed.timeColumn), ...valueColumns, ...Object.values(feed.flagColumns).map(lower)]);
    if (feed.maintenanceColumn && taken.has(lower(feed.maintenanceColumn))) {
      context.addIssue({
        code: 'custom',
        path: ['maintenanceColumn'],
        message: `"${feed.maintenanceColumn}" is already the time column, a value column or a flag column.`,
      });
    }
    for (const [valueColumn, flagColumn] of Object.entries(feed.flagColumns)) {
      if (!valueColumns.has(lower(valueColumn))) {
        context.addIssue({ code: 'custom', path: ['flagColumns', valueColumn], message: `"${valueColumn}" is not one of the feed's value columns.` });
      }
      if (valueColumns.has(lower(flagColumn)) || lower(flagColumn) === lower(feed.timeColumn)) {
        context.addIssue({ code: 'custom', path: ['flagColumns', valueColumn], message: `"${flagColumn}" is already the time column or a value column.` });
      }
    }
  });
export type FeedCreateInput = z.input<typeof feedCreateSchema>;
export type FeedCreate = z.output<typeof feedCreateSchema>;
