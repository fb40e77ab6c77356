/**
 * An edition's metadata: what the spec form needs to choose series and to count N, K and T
 * (series names, kinds, traded flags, dates), without any return value. For a daily library of
 * 12,000 dates × 2,000 series this is about 12,000 short strings instead of 24 million numbers.
 * `GET /libraries/:id/editions/:n/meta`, readable exactly when the edition itself is.
 */
import { z } from 'zod';
import { frequencySchema, seriesKindSchema } from './libraries';

export const editionMetaSeriesSchema = z.object({
  name: z.string(),
  kind: seriesKindSchema,
  /** Factors: an excess return (traded) or not. Other kinds: as stored. */
  traded: z.boolean(),
});
export type EditionMetaSeries = z.infer<typeof editionMetaSeriesSchema>;

export const editionMetaSchema = z.object({
  editionId: z.number().int(),
  libraryId: z.number().int(),
  libraryName: z.string(),
  number: z.number().int(),
  frequency: frequencySchema,
  firstDate: z.string(),
  lastDate: z.string(),
  /** Number of dates (periods) in the edition. */
  T: z.number().int(),
  /** Ascending, YYYY-MM or YYYY-MM-DD: the form counts T inside a window from them. */
  dates: z.array(z.string()),
  series: z.array(editionMetaSeriesSchema),
  /** The edition's risk-free series (the spec form's default), or null when it has none. */
  riskFree: z.string().nullable(),
});
export type EditionMeta = z.infer<typeof editionMetaSchema>;
export const editionMetaResponseSchema = z.object({ meta: editionMetaSchema });
