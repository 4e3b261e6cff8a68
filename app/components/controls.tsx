/** A labelled select, sized for touch. */
export function SelectField({
  label,
  name,
  options,
  error,
  ...select
}: { label: string; name: string; options: { value: string; label: string }[]; error?: string } & React.SelectHTMLAttributes<HTMLSelectElement>) {
  const id = `f-${name}`;
  return (
    <div className="mb-5">
      <label htmlFor={id} className="label">
        {label}
      </label>
      <select id={id} name={name} className="field" aria-invalid={error ? true : undefined} aria-describedby={error ? `${id}-error` : undefined} {...select}>
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      {error ? (
        <p id={`${id}-error`} className="field-error" role="alert">
          {error}
        </p>
      ) : null}
    </div>
  );
}

export function CheckboxField({ label, name, ...input }: { label: string; name: string } & React.InputHTMLAttributes<HTMLInputElement>) {
  return (
    <label className="mb-5 flex min-h-14 cursor-pointer items-center gap-4 rounded-xl border-2 border-line bg-white px-4">
      <input type="checkbox" name={name} value="true" className="h-7 w-7 accent-glacier" {...input} />
      <span className="text-base">{label}</span>
    </label>
  );
}
