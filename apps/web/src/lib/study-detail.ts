import { z } from 'zod';
import { allocationSchemeDtoSchema, studyDetailSchema } from '@counterpoise/contracts/design';

/*
 * The study as the web reads it (the shared contract). Site staff get the allocation method
 * only: block sizes, factors and seeds stay concealed from them (ICH E9 2.3.1), so
 * `allocation` is either the full stored scheme or `{ method, concealed: true }`.
 */
export type StudyDetail = z.output<typeof studyDetailSchema>;
export type FullAllocation = z.output<typeof allocationSchemeDtoSchema>;

/** The full scheme, or null when it is concealed from the reader or not set. */
export function fullAllocation(study: Pick<StudyDetail, 'allocation'>): FullAllocation | null {
  const a = study.allocation;
  if (!a || 'concealed' in a) return null;
  return a;
}

export const studyDetailResponseSchema = z.object({ study: studyDetailSchema });
