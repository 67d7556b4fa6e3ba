import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { consentDocumentDtoSchema, type ConsentDocumentDto } from '@counterpoise/contracts/participants';
import { uploadForm, type UploadProgress } from '../../../lib/upload.js';
import { participantQueryKey } from './get-participant.js';

const consentResponseSchema = z.object({ document: consentDocumentDtoSchema });

/** The types the server accepts (it checks the content too, not only the name). */
export const consentFileTypes = ['application/pdf', 'image/png', 'image/jpeg'] as const;
export const consentMaxBytes = 10 * 1024 * 1024;

export async function uploadConsent({
  studyId,
  participantId,
  file,
  onProgress,
}: {
  studyId: string;
  participantId: string;
  file: File;
  onProgress?: (p: UploadProgress) => void;
}): Promise<ConsentDocumentDto> {
  const form = new FormData();
  form.append('file', file, file.name);
  const { document } = await uploadForm(
    `/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}/consent`,
    form,
    consentResponseSchema,
    onProgress ? { onProgress } : {},
  );
  return document;
}

export function useUploadConsent(studyId: string) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: uploadConsent,
    onSuccess: (_doc, vars) =>
      queryClient.invalidateQueries({ queryKey: participantQueryKey(studyId, vars.participantId) }),
  });
}

/** Where an authorised reader opens a stored consent document. */
export function consentDocumentHref(studyId: string, participantId: string, documentId: string): string {
  return `/api/studies/${encodeURIComponent(studyId)}/participants/${encodeURIComponent(participantId)}/consent/${encodeURIComponent(documentId)}`;
}

/** First bytes of PDF, PNG and JPEG files: a quick check before upload (the server checks again). */
export async function sniffConsentFile(file: File): Promise<string | null> {
  if (file.size === 0) return 'The file is empty.';
  if (file.size > consentMaxBytes) return `The file is larger than ${consentMaxBytes / (1024 * 1024)} MB.`;
  const head = new Uint8Array(await file.slice(0, 8).arrayBuffer());
  const starts = (...bytes: number[]) => bytes.every((b, i) => head[i] === b);
  const ok = starts(0x25, 0x50, 0x44, 0x46) || starts(0x89, 0x50, 0x4e, 0x47) || starts(0xff, 0xd8, 0xff);
  return ok ? null : 'Only PDF, PNG or JPEG files can be uploaded, and this file is none of them.';
}
