import { z } from 'zod';

export const studyKindSchema = z.enum(['randomized_trial', 'observational_cohort']);
export const blindingSchema = z.enum(['blinded', 'open_label']);
export const studyStatusSchema = z.enum(['setup', 'enrolling', 'closed']);

export const studySummarySchema = z.object({
  id: z.uuid(),
  code: z.string(),
  title: z.string(),
  kind: studyKindSchema,
  blinding: blindingSchema,
  status: studyStatusSchema,
  targetSampleSize: z.number().int(),
  enrolled: z.number().int(),
  siteCount: z.number().int(),
  /** The caller's role in this study ('admin' for administrators without a membership). */
  myRole: z.string(),
  /** What the caller may do in this study, decided by the API's policy module. */
  permissions: z.array(z.string()),
  /** Whether the caller may see arms (unblinded role). */
  unblinded: z.boolean(),
});
export type StudySummary = z.infer<typeof studySummarySchema>;
export const studyListSchema = z.object({ studies: z.array(studySummarySchema) });
