import type { ReactNode, Ref } from 'react';
import { formatBytes } from '../../lib/upload.js';
import { Table, TBody, TD, TH, THead, TR } from './table.js';

/**
 * The file picker of the CSV uploads (participant import, outcomes): label, input, a hint and
 * the chosen file's name and size.
 */
export function CsvFileField({
  id,
  file,
  hint,
  disabled,
  inputRef,
  onChoose,
  reselectable = false,
}: {
  id: string;
  file: File | null;
  hint: ReactNode;
  disabled?: boolean;
  inputRef?: Ref<HTMLInputElement>;
  onChoose: (file: File | null) => void;
  /** Clear the input as the picker opens, so choosing the same file again (after fixing it) reads it again. */
  reselectable?: boolean;
}) {
  return (
    <div className="flex flex-col gap-1.5">
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        CSV file
      </label>
      <input
        ref={inputRef}
        id={id}
        type="file"
        accept=".csv,text/csv"
        aria-describedby={`${id}-hint`}
        disabled={disabled}
        className="block w-full rounded-control border border-pebble bg-vellum p-2 text-sm file:mr-3 file:rounded-control file:border-0 file:bg-spruce-wash file:px-3 file:py-1.5 file:font-semibold file:text-spruce-deep"
        onClick={
          reselectable
            ? (e) => {
                e.currentTarget.value = '';
              }
            : undefined
        }
        onChange={(e) => onChoose(e.target.files?.[0] ?? null)}
      />
      <p id={`${id}-hint`} className="text-sm text-graphite">
        {hint}
        {file && (
          <>
            {' '}
            Chosen: <span className="font-semibold">{file.name}</span> ({formatBytes(file.size)}).
          </>
        )}
      </p>
    </div>
  );
}

/** The columns a CSV upload reads, with what each holds. */
export function FileColumnsTable({ label, columns }: { label: string; columns: { name: string; meaning: ReactNode }[] }) {
  return (
    <Table aria-label={label}>
      <THead>
        <TR>
          <TH>Column</TH>
          <TH>What it holds</TH>
        </TR>
      </THead>
      <TBody>
        {columns.map((c) => (
          <TR key={c.name}>
            <TD>
              <code className="text-xs">{c.name}</code>
            </TD>
            <TD>{c.meaning}</TD>
          </TR>
        ))}
      </TBody>
    </Table>
  );
}
