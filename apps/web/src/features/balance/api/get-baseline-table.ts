import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { baselineTableSchema, type BaselineTable } from '@counterpoise/contracts/balance';
import { api, toQueryString } from '../../../lib/api-client.js';

export const baselineTableQueryKey = (studyId: string) => ['studies', studyId, 'baseline-table'] as const;

export async function getBaselineTable(
  studyId: string,
  pvalues: boolean,
  siteId: string | null,
  signal?: AbortSignal,
): Promise<BaselineTable> {
  const search = toQueryString({ pvalues: pvalues ? 'true' : undefined, site: siteId });
  return api.get(
    `/studies/${encodeURIComponent(studyId)}/baseline-table${search}`,
    baselineTableSchema,
    signal,
  );
}

export const baselineTableQueryOptions = (studyId: string, pvalues: boolean, siteId: string | null = null) =>
  queryOptions({
    queryKey: [...baselineTableQueryKey(studyId), { pvalues, site: siteId }] as const,
    queryFn: ({ signal }) => getBaselineTable(studyId, pvalues, siteId, signal),
    // Keep the table on screen while the labelled p-values are fetched.
    placeholderData: keepPreviousData,
  });

export function useBaselineTable(studyId: string, pvalues: boolean, siteId: string | null = null) {
  return useQuery(baselineTableQueryOptions(studyId, pvalues, siteId));
}

/** The CSV is a plain download link: the session cookie goes with it. */
export function baselineTableCsvHref(
  studyId: string,
  pvalues: boolean,
  siteId: string | null = null,
): string {
  return `/api/studies/${encodeURIComponent(studyId)}/baseline-table.csv${toQueryString({
    pvalues: pvalues ? 'true' : undefined,
    site: siteId,
  })}`;
}
