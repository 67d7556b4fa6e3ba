import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { studyOptionLabel } from '../../../lib/study-label.js';
import { Button } from '../../../components/ui/button.js';
import { SelectField, TextField } from '../../../components/ui/field.js';
import type { AuditFilters } from '../api/get-audit-events.js';

export type StudyOption = { id: string; code: string; title: string };

// datetime-local gives "YYYY-MM-DDTHH:mm"; the audit trail is kept in UTC, so the inputs are UTC too.
const localDateTime = z
  .string()
  .trim()
  .refine((v) => v === '' || /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2})?$/.test(v), 'Use a date and time');

const filterFormSchema = z
  .object({
    studyId: z.string(),
    action: z.string().trim().max(100),
    entityType: z.string().trim().max(100),
    entityId: z.string().trim().max(200),
    actor: z.string().trim().max(254),
    from: localDateTime,
    to: localDateTime,
    limit: z.coerce.number().int().min(1).max(500),
  })
  .refine((v) => !v.from || !v.to || v.from <= v.to, { path: ['to'], message: '"To" is before "From"' });

type FilterFormInput = z.input<typeof filterFormSchema>;

const emptyForm: FilterFormInput = {
  studyId: '',
  action: '',
  entityType: '',
  entityId: '',
  actor: '',
  from: '',
  to: '',
  limit: 50,
};

function toUtcIso(local: string): string | undefined {
  if (!local) return undefined;
  return `${local.length === 16 ? `${local}:00` : local}Z`;
}

const blankToUndefined = (v: string) => (v === '' ? undefined : v);

type AuditFiltersFormProps = {
  studies: StudyOption[];
  /** When the browser sits inside one study, the study filter is fixed and hidden. */
  fixedStudyId?: string | undefined;
  onApply: (filters: AuditFilters) => void;
};

export function AuditFiltersForm({ studies, fixedStudyId, onApply }: AuditFiltersFormProps) {
  const {
    register,
    handleSubmit,
    reset,
    formState: { errors },
  } = useForm({ resolver: zodResolver(filterFormSchema), defaultValues: emptyForm });

  const apply = handleSubmit((v) =>
    onApply({
      studyId: fixedStudyId ?? blankToUndefined(v.studyId),
      action: blankToUndefined(v.action),
      entityType: blankToUndefined(v.entityType),
      entityId: blankToUndefined(v.entityId),
      actor: blankToUndefined(v.actor),
      from: toUtcIso(v.from),
      to: toUtcIso(v.to),
      limit: v.limit,
    }),
  );

  return (
    <form onSubmit={apply} noValidate aria-label="Audit filters" className="flex flex-col gap-4">
      <div className="grid gap-4 sm:grid-cols-2 lg:grid-cols-4">
        {!fixedStudyId && (
          <SelectField label="Study" {...register('studyId')}>
            <option value="">All (studies and account events)</option>
            {studies.map((s) => (
              <option key={s.id} value={s.id}>
                {studyOptionLabel(s)}
              </option>
            ))}
          </SelectField>
        )}
        <TextField
          label="Action"
          placeholder="e.g. auth.sign_in"
          error={errors.action?.message}
          {...register('action')}
        />
        <TextField
          label="Entity type"
          placeholder="e.g. participant"
          error={errors.entityType?.message}
          {...register('entityType')}
        />
        <TextField label="Entity id" error={errors.entityId?.message} {...register('entityId')} />
        <TextField
          label="Actor e-mail"
          type="text"
          autoComplete="off"
          error={errors.actor?.message}
          {...register('actor')}
        />
        <TextField
          label="From (UTC)"
          type="datetime-local"
          error={errors.from?.message}
          {...register('from')}
        />
        <TextField label="To (UTC)" type="datetime-local" error={errors.to?.message} {...register('to')} />
        <SelectField label="Rows per page" {...register('limit')}>
          <option value="25">25</option>
          <option value="50">50</option>
          <option value="100">100</option>
          <option value="250">250</option>
        </SelectField>
      </div>
      <div className="flex gap-2">
        <Button type="submit">Apply filters</Button>
        <Button
          variant="quiet"
          onClick={() => {
            reset(emptyForm);
            onApply({ studyId: fixedStudyId, limit: 50 });
          }}
        >
          Clear
        </Button>
      </div>
    </form>
  );
}
