import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { importReportSchema, type ImportReport } from '@counterpoise/contracts/participants';
import { isApiError, toQueryString } from '../../../lib/api-client.js';
import { uploadForm, type UploadProgress } from '../../../lib/upload.js';

const importResponseSchema = z.object({ report: importReportSchema });

export type ImportMode = 'preview' | 'commit';

/**
 * Sends the CSV: `preview` checks every row and writes nothing; `commit` imports the whole
 * file in one transaction or nothing. A refused commit still carries the row report.
 */
export async function importParticipants({
  studyId,
  file,
  mode,
  progressId,
  onUpload,
}: {
  studyId: string;
  file: File;
  mode: ImportMode;
  progressId: string;
  onUpload?: (p: UploadProgress) => void;
}): Promise<ImportReport> {
  const form = new FormData();
  form.append('file', file, file.name);
  try {
    const { report } = await uploadForm(
      `/studies/${encodeURIComponent(studyId)}/participants/import${toQueryString({ mode, progressId })}`,
      form,
      importResponseSchema,
      onUpload ? { onProgress: onUpload } : {},
    );
    return report;
  } catch (error) {
    const report = reportOf(error);
    if (report) return report;
    throw error;
  }
}

/** The report inside a refused commit (`validation_failed` with `details.report`). */
function reportOf(error: unknown): ImportReport | null {
  if (!isApiError(error, 'validation_failed')) return null;
  const details = error.details as { report?: unknown } | undefined;
  const parsed = importReportSchema.safeParse(details?.report);
  return parsed.success ? parsed.data : null;
}

export function useImportParticipants(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: importParticipants,
    onSuccess: (report) => {
      if (report.mode !== 'commit' || report.imported === 0) return;
      void queryClient.invalidateQueries({ queryKey: ['studies', studyId, 'participants'] });
      void queryClient.invalidateQueries({ queryKey: ['studies', studyId, 'detail'] });
      void queryClient.invalidateQueries({ queryKey: ['studies'], exact: true });
    },
  });
}

/** A random id the server files progress under while it reads the file. */
export function newProgressId(): string {
  const bytes = crypto.getRandomValues(new Uint8Array(12));
  return Array.from(bytes, (b) => b.toString(16).padStart(2, '0')).join('');
}
