export type SelectOption = { value: string; label: string };

/**
 * A labelled select for GET filter forms. `anyLabel` adds a first option with the empty
 * value ("All"), which the filter parsers read as no filter.
 */
export function SelectField({
  id,
  name,
  label,
  options,
  value,
  anyLabel,
}: {
  id: string;
  name: string;
  label: string;
  options: readonly SelectOption[];
  value?: string | null;
  anyLabel?: string;
}) {
  return (
    <div className="field">
      <label htmlFor={id}>{label}</label>
      <select id={id} name={name} defaultValue={value ?? ""}>
        {anyLabel !== undefined && <option value="">{anyLabel}</option>}
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
    </div>
  );
}

/** A labelled date input for GET filter forms. */
export function DateField({ id, name, label, value, required }: { id: string; name: string; label: string; value?: string | null; required?: boolean }) {
  return (
    <div className="field">
      <label htmlFor={id}>{label}</label>
      <input id={id} name={name} type="date" defaultValue={value ?? ""} required={required} />
    </div>
  );
}
