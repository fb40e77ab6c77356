import { z } from 'zod';

/**
 * Return libraries: schemas shared by the server routes and the client fetchers.
 * Values are stored as decimals (0.01 = 1%); a library uploaded in percent is converted on confirm.
 */

export const FREQUENCIES = ['monthly', 'daily'] as const;
export const frequencySchema = z.enum(FREQUENCIES);
export type Frequency = z.infer<typeof frequencySchema>;

export const UNITS = ['decimal', 'percent'] as const;
export const unitsSchema = z.enum(UNITS);
export type Units = z.infer<typeof unitsSchema>;

export const SERIES_KINDS = ['asset', 'factor', 'rf'] as const;
export const seriesKindSchema = z.enum(SERIES_KINDS);
export type SeriesKind = z.infer<typeof seriesKindSchema>;

export const SERIES_KIND_LABELS: Readonly<Record<SeriesKind, string>> = {
  asset: 'Test asset',
  factor: 'Factor',
  rf: 'Risk-free',
};

export const VISIBILITIES = ['private', 'shared'] as const;
export const visibilitySchema = z.enum(VISIBILITIES);
export type Visibility = z.infer<typeof visibilitySchema>;

/** Most series columns one upload may carry. */
export const MAX_COLUMNS = 2000;

/** Descriptive statistics of one column; sd uses the divisor T (methods contract). */
export const seriesStatsSchema = z.object({
  count: z.number().int(),
  missing: z.number().int(),
  mean: z.number().nullable(),
  sd: z.number().nullable(),
  min: z.number().nullable(),
  max: z.number().nullable(),
});
export type SeriesStats = z.infer<typeof seriesStatsSchema>;

export const uploadWarningSchema = z.object({
  /** machine code: 'sorted' | 'percent_among_decimals' | 'decimal_among_percent' | 'constant' | 'jump' | 'missing' */
  code: z.string(),
  column: z.string().optional(),
  row: z.number().int().optional(),
  message: z.string(),
});
export type UploadWarning = z.infer<typeof uploadWarningSchema>;

/**
 * Where a suggested series kind comes from: the same-named series of the target library's latest
 * edition, a same-named factor of another library's latest edition, a risk-free-like name, or nothing.
 */
export const SUGGESTION_SOURCES = ['previous_edition', 'other_library', 'name', 'none'] as const;
export type SuggestionSource = (typeof SUGGESTION_SOURCES)[number];

export const uploadColumnSchema = z.object({
  name: z.string(),
  stats: seriesStatsSchema,
  /** Median absolute value, the scale used to tell percent from decimals. */
  scale: z.number().nullable(),
  suggestedKind: seriesKindSchema,
  /** Factors: suggested traded flag (carried over from an earlier edition or another library; else true). */
  suggestedTraded: z.boolean(),
  /** Where the suggestion comes from, and the sentence the review shows for it. */
  suggestion: z.object({ source: z.enum(SUGGESTION_SOURCES), reason: z.string() }),
});
export type UploadColumn = z.infer<typeof uploadColumnSchema>;

export const uploadTargetSchema = z.object({
  libraryId: z.number().int(),
  libraryName: z.string(),
  /** The latest edition the kinds were carried over from (null: the library has no edition left). */
  edition: z.number().int().nullable(),
  newSeries: z.array(z.string()),
  goneSeries: z.array(z.string()),
});
export type UploadTarget = z.infer<typeof uploadTargetSchema>;

export const uploadSchema = z.object({
  id: z.string(),
  fileName: z.string(),
  columns: z.array(z.string()),
  frequency: frequencySchema,
  rows: z.number().int(),
  firstDate: z.string(),
  lastDate: z.string(),
  /** Units Keelson detected; the user confirms or overrides them. */
  units: unitsSchema,
  warnings: z.array(uploadWarningSchema),
  series: z.array(uploadColumnSchema),
  /**
   * Set when the upload was sent for a new edition of an existing library: the edition it was
   * compared with, and the series that are new in the file or gone from it (by name).
   */
  target: uploadTargetSchema.nullable(),
  expiresAt: z.string(),
});
export type Upload = z.infer<typeof uploadSchema>;
export const uploadResponseSchema = z.object({ upload: uploadSchema });

const seriesNameSchema = z.string().trim().min(1, 'Give the series a name').max(120);

export const confirmSeriesSchema = z.object({
  name: seriesNameSchema,
  kind: seriesKindSchema,
  /** Factors only: is the factor itself an excess return? Ignored for assets and risk-free. */
  traded: z.boolean().optional(),
});
export type ConfirmSeries = z.infer<typeof confirmSeriesSchema>;

export const confirmUploadBodySchema = z
  .object({
    name: z.string().trim().min(1, 'Give the library a name').max(120).optional(),
    description: z.string().trim().max(2000).optional(),
    visibility: visibilitySchema.optional(),
    units: unitsSchema,
    series: z.array(confirmSeriesSchema).min(1, 'Keep at least one series'),
    libraryId: z.number().int().positive().optional(),
  })
  .refine((b) => b.libraryId !== undefined || b.name !== undefined, { message: 'Give the library a name', path: ['name'] })
  .refine((b) => b.libraryId !== undefined || b.visibility !== undefined, {
    message: 'Choose private or shared',
    path: ['visibility'],
  });
export type ConfirmUploadBody = z.infer<typeof confirmUploadBodySchema>;

export const confirmResponseSchema = z.object({
  library: z.object({ id: z.number().int(), name: z.string() }),
  edition: z.object({ id: z.number().int(), number: z.number().int() }),
});
export type ConfirmResponse = z.infer<typeof confirmResponseSchema>;

export const editionSummarySchema = z.object({
  id: z.number().int(),
  number: z.number().int(),
  frequency: frequencySchema,
  rows: z.number().int(),
  firstDate: z.string(),
  lastDate: z.string(),
  seriesCount: z.number().int(),
  sourceUnits: unitsSchema,
  fileName: z.string(),
  createdAt: z.string(),
  createdBy: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  used: z.boolean(),
});
export type EditionSummary = z.infer<typeof editionSummarySchema>;

export const librarySummarySchema = z.object({
  id: z.number().int(),
  name: z.string(),
  description: z.string(),
  visibility: visibilitySchema,
  owner: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  archived: z.boolean(),
  archivedAt: z.string().nullable(),
  createdAt: z.string(),
  frequency: frequencySchema.nullable(),
  firstDate: z.string().nullable(),
  lastDate: z.string().nullable(),
  editionCount: z.number().int(),
  latestEdition: z.number().int().nullable(),
  seriesCount: z.number().int(),
  /** What the signed-in user may do with this library. */
  can: z.object({ addEdition: z.boolean(), publish: z.boolean(), unpublish: z.boolean(), archive: z.boolean(), deleteEdition: z.boolean() }),
});
export type LibrarySummary = z.infer<typeof librarySummarySchema>;
export const librariesResponseSchema = z.object({ libraries: z.array(librarySummarySchema) });

export const libraryDetailSchema = librarySummarySchema.extend({ editions: z.array(editionSummarySchema) });
export type LibraryDetail = z.infer<typeof libraryDetailSchema>;
export const libraryResponseSchema = z.object({ library: libraryDetailSchema });

export const editionSeriesInfoSchema = z.object({
  name: z.string(),
  kind: seriesKindSchema,
  traded: z.boolean(),
  stats: seriesStatsSchema,
});
export type EditionSeriesInfo = z.infer<typeof editionSeriesInfoSchema>;

export const editionDetailSchema = editionSummarySchema.extend({
  libraryId: z.number().int(),
  libraryName: z.string(),
  series: z.array(editionSeriesInfoSchema),
});
export type EditionDetail = z.infer<typeof editionDetailSchema>;
export const editionResponseSchema = z.object({ edition: editionDetailSchema });

export const editionDataResponseSchema = z.object({
  editionId: z.number().int(),
  libraryId: z.number().int(),
  libraryName: z.string(),
  number: z.number().int(),
  frequency: frequencySchema,
  dates: z.array(z.string()),
  series: z.array(
    z.object({ name: z.string(), kind: seriesKindSchema, traded: z.boolean(), values: z.array(z.number().nullable()) }),
  ),
});
export type EditionDataResponse = z.infer<typeof editionDataResponseSchema>;

export const libraryListQuerySchema = z.object({
  q: z.string().trim().max(120).optional(),
  frequency: frequencySchema.optional(),
  /** 'only' lists archived libraries, 'include' lists both; default hides them. */
  archived: z.enum(['hide', 'include', 'only']).default('hide'),
  /** YYYY-MM or YYYY-MM-DD: libraries whose latest edition covers this date. */
  covers: z.string().regex(/^\d{4}-\d{2}(-\d{2})?$/, 'Use YYYY-MM or YYYY-MM-DD').optional(),
  scope: z.enum(['all', 'shared', 'mine']).default('all'),
});
export type LibraryListQuery = z.infer<typeof libraryListQuerySchema>;
