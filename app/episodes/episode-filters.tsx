import Link from "next/link";
import { DateField, SelectField } from "@/app/components/forms/select-field";
import type { EpisodeFilter } from "@/lib/db/episodes";
import { EPISODE_STATUSES, STATUS_LABELS } from "@/lib/episodes/status";

type Named = { code: string; name: string };

/** The list's filter form (status, comparison, line, category, dates), a plain GET form. */
export function EpisodeFilters({
  filter,
  comparisons,
  lines,
  categories,
  errors,
}: {
  filter: EpisodeFilter;
  comparisons: Named[];
  lines: Named[];
  categories: Named[];
  errors: string[];
}) {
  const options = (items: Named[]) => items.map((i) => ({ value: i.code, label: i.name }));
  const statuses = [{ value: "open", label: "Open (new or under investigation)" }, ...EPISODE_STATUSES.map((s) => ({ value: s, label: STATUS_LABELS[s] }))];
  return (
    <form className="card episode-filters no-print" method="get" aria-label="Filter flagged periods">
      <div className="form-row">
        <SelectField id="f-status" name="status" label="Status" anyLabel="All" value={filter.status} options={statuses} />
        <SelectField id="f-comparison" name="comparison" label="Comparison" anyLabel="All" value={filter.comparison} options={options(comparisons)} />
        <SelectField id="f-line" name="line" label="Line" anyLabel="All" value={filter.line} options={options(lines)} />
        <SelectField id="f-category" name="category" label="Category" anyLabel="All" value={filter.category} options={options(categories)} />
        <DateField id="f-from" name="from" label="From" value={filter.from} />
        <DateField id="f-to" name="to" label="To" value={filter.to} />
        <div className="field">
          <button type="submit">Show</button>
        </div>
        <div className="field">
          <Link className="button secondary" href="/episodes">
            Clear
          </Link>
        </div>
      </div>
      {errors.length > 0 && (
        <p className="error-text" role="alert">
          {errors.join(" ")}
        </p>
      )}
    </form>
  );
}
