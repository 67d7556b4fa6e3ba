import {
  useId,
  type InputHTMLAttributes,
  type ReactNode,
  type Ref,
  type SelectHTMLAttributes,
  type TextareaHTMLAttributes,
} from 'react';
import { cn } from '../../lib/cn.js';

const controlBase =
  'block w-full rounded-control border bg-vellum px-3 text-ink placeholder:text-graphite/70 ' +
  'disabled:bg-paper disabled:text-graphite aria-[invalid=true]:border-brick aria-[invalid=true]:border-2';

type FieldFrameProps = {
  id: string;
  label: ReactNode;
  hint?: ReactNode;
  error?: string | undefined;
  required?: boolean | undefined;
  children: ReactNode;
  className?: string | undefined;
};

function FieldFrame({ id, label, hint, error, required, children, className }: FieldFrameProps) {
  return (
    <div className={cn('flex flex-col gap-1.5', className)}>
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        {label}
        {required && (
          <span className="ml-1 font-normal text-graphite" aria-hidden="true">
            (required)
          </span>
        )}
      </label>
      {children}
      {hint && !error && (
        <p id={`${id}-hint`} className="text-sm text-graphite">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${id}-error`} className="flex items-start gap-1.5 text-sm font-medium text-brick">
          <span aria-hidden="true">✕</span>
          {error}
        </p>
      )}
    </div>
  );
}

function describedBy(id: string, hint: unknown, error: unknown): string | undefined {
  if (error) return `${id}-error`;
  if (hint) return `${id}-hint`;
  return undefined;
}

type CommonProps = {
  label: ReactNode;
  hint?: ReactNode;
  error?: string | undefined;
  frameClassName?: string;
};

type TextFieldProps = CommonProps & InputHTMLAttributes<HTMLInputElement> & { ref?: Ref<HTMLInputElement> };

export function TextField({
  label,
  hint,
  error,
  frameClassName,
  id,
  className,
  required,
  ...rest
}: TextFieldProps) {
  const autoId = useId();
  const fieldId = id ?? autoId;
  return (
    <FieldFrame
      id={fieldId}
      label={label}
      hint={hint}
      error={error}
      required={required}
      className={frameClassName}
    >
      <input
        id={fieldId}
        className={cn(controlBase, 'h-10 border-pebble', className)}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(fieldId, hint, error)}
        aria-required={required || undefined}
        {...rest}
      />
    </FieldFrame>
  );
}

type TextareaFieldProps = CommonProps &
  TextareaHTMLAttributes<HTMLTextAreaElement> & { ref?: Ref<HTMLTextAreaElement> };

export function TextareaField({
  label,
  hint,
  error,
  frameClassName,
  id,
  className,
  required,
  ...rest
}: TextareaFieldProps) {
  const autoId = useId();
  const fieldId = id ?? autoId;
  return (
    <FieldFrame
      id={fieldId}
      label={label}
      hint={hint}
      error={error}
      required={required}
      className={frameClassName}
    >
      <textarea
        id={fieldId}
        className={cn(controlBase, 'min-h-20 border-pebble py-2', className)}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(fieldId, hint, error)}
        aria-required={required || undefined}
        {...rest}
      />
    </FieldFrame>
  );
}

type SelectFieldProps = CommonProps &
  SelectHTMLAttributes<HTMLSelectElement> & { ref?: Ref<HTMLSelectElement> };

export function SelectField({
  label,
  hint,
  error,
  frameClassName,
  id,
  className,
  required,
  children,
  ...rest
}: SelectFieldProps) {
  const autoId = useId();
  const fieldId = id ?? autoId;
  return (
    <FieldFrame
      id={fieldId}
      label={label}
      hint={hint}
      error={error}
      required={required}
      className={frameClassName}
    >
      <select
        id={fieldId}
        className={cn(controlBase, 'h-10 border-pebble pr-8', className)}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(fieldId, hint, error)}
        aria-required={required || undefined}
        {...rest}
      >
        {children}
      </select>
    </FieldFrame>
  );
}

type CheckboxFieldProps = Omit<InputHTMLAttributes<HTMLInputElement>, 'type'> & {
  label: ReactNode;
  hint?: ReactNode;
  ref?: Ref<HTMLInputElement>;
};

export function CheckboxField({ label, hint, id, className, ...rest }: CheckboxFieldProps) {
  const autoId = useId();
  const fieldId = id ?? autoId;
  return (
    <div className={cn('flex items-start gap-2.5', className)}>
      <input
        id={fieldId}
        type="checkbox"
        className="mt-0.5 size-4.5 shrink-0 rounded border-pebble accent-spruce"
        aria-describedby={hint ? `${fieldId}-hint` : undefined}
        {...rest}
      />
      <div className="flex flex-col gap-0.5">
        <label htmlFor={fieldId} className="text-sm font-medium text-ink">
          {label}
        </label>
        {hint && (
          <p id={`${fieldId}-hint`} className="text-sm text-graphite">
            {hint}
          </p>
        )}
      </div>
    </div>
  );
}
