/** "CODE · Title", without repeating the code when the title already starts with it. */
export function studyOptionLabel(study: { code: string; title: string }): string {
  return study.title.toLowerCase().startsWith(study.code.toLowerCase())
    ? study.title
    : `${study.code} · ${study.title}`;
}
