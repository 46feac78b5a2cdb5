import { useId, type ComponentProps, type ReactNode } from 'react';

const controlClass =
  'block w-full rounded-md border bg-surface px-2.5 py-1.5 text-sm text-text placeholder:text-muted/70 focus:outline-none focus:ring-2 focus:ring-focus/60';

function borderFor(error?: string) {
  return error ? 'border-danger' : 'border-line';
}

interface FieldShellProps {
  id: string;
  label: string;
  error?: string;
  hint?: ReactNode;
  className?: string;
  children: ReactNode;
}

function FieldShell({ id, label, error, hint, className = '', children }: FieldShellProps) {
  return (
    <div className={`space-y-1 ${className}`}>
      <label htmlFor={id} className="block text-sm font-medium text-text">
        {label}
      </label>
      {children}
      {error ? (
        <p id={`${id}-error`} className="text-sm text-danger">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-xs text-muted">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

/** The attributes every control shares: its id, error state, description and classes. */
function controlProps(id: string, error: string | undefined, hint: ReactNode, className: string) {
  return {
    id,
    'aria-invalid': error ? true : undefined,
    'aria-describedby': describedBy(id, error, hint),
    className: `${controlClass} ${borderFor(error)} ${className}`,
  } as const;
}

function describedBy(id: string, error?: string, hint?: ReactNode) {
  if (error) return `${id}-error`;
  if (hint) return `${id}-hint`;
  return undefined;
}

type TextFieldProps = ComponentProps<'input'> & {
  label: string;
  error?: string;
  hint?: ReactNode;
  wrapperClassName?: string;
};

export function TextField({ label, error, hint, wrapperClassName, className = '', ...input }: TextFieldProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={wrapperClassName}>
      <input
        {...controlProps(id, error, hint, className)}
        {...input}
      />
    </FieldShell>
  );
}

type TextAreaProps = ComponentProps<'textarea'> & {
  label: string;
  error?: string;
  hint?: ReactNode;
  wrapperClassName?: string;
};

export function TextArea({ label, error, hint, wrapperClassName, className = '', ...input }: TextAreaProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={wrapperClassName}>
      <textarea
        {...controlProps(id, error, hint, className)}
        {...input}
      />
    </FieldShell>
  );
}

type SelectFieldProps = ComponentProps<'select'> & {
  label: string;
  error?: string;
  hint?: ReactNode;
  options: { value: string; label: string }[];
  wrapperClassName?: string;
};

export function SelectField({ label, error, hint, options, wrapperClassName, className = '', ...select }: SelectFieldProps) {
  const id = useId();
  return (
    <FieldShell id={id} label={label} error={error} hint={hint} className={wrapperClassName}>
      <select
        {...controlProps(id, error, hint, className)}
        {...select}
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </FieldShell>
  );
}
