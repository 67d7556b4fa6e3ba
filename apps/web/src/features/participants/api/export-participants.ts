/** The CSV export is a plain download; the browser sends the session cookie with the link. */
export function participantsExportHref(studyId: string): string {
  return `/api/studies/${encodeURIComponent(studyId)}/participants/export.csv`;
}
