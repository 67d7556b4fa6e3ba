import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { baselineTableSchema, type BaselineTable } from '@counterpoise/contracts/balance';
import { api, toQueryString } from '../../../lib/api-client.js';

export const baselineTableQueryKey = (studyId: string) => ['studies', studyId, 'baseline-table'] as const;

export async function getBaselineTable(
  studyId: string,
  pvalues: boolean,
  signal?: AbortSignal,
): Promise<BaselineTable> {
  const search = toQueryString({ pvalues: pvalues ? 'true' : undefined });
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/baseline-table${search}`,
    baselineTableSchema,
    signal,
  );
}

export const baselineTableQueryOptions = (studyId: string, pvalues: boolean) =>
  queryOptions({
    queryKey: [...baselineTableQueryKey(studyId), { pvalues }] as const,
    queryFn: ({ signal }) => getBaselineTable(studyId, pvalues, signal),
    // Keep the table on screen while the labelled p-values are fetched.
    placeholderData: keepPreviousData,
  });

export function useBaselineTable(studyId: string, pvalues: boolean) {
  return useQuery(baselineTableQueryOptions(studyId, pvalues));
}

/** The CSV is a plain download link: the session cookie goes with it. */
export function baselineTableCsvHref(studyId: string, pvalues: boolean): string {
  return `/api/studies/${encodeURIComponent(studyId)}/baseline-table.csv${toQueryString({
    pvalues: pvalues ? 'true' : undefined,
  })}`;
}
