import type { PlantMasterData } from "@/lib/db/plant";
import type { CompareKind } from "@/lib/db/comparisons";

/** Code → display name lookups for the review screens (pure once built). */
export interface Names {
  line(code: string): string;
  shift(code: string): string;
  category(code: string): string;
  /** A row of a comparison's table: a line, a shift, or "This window"/"Previous N weeks". */
  row(kind: CompareKind, code: string, historyWeeks?: number): string;
}

export function namesFrom(plant: Pick<PlantMasterData, "lines" | "shifts" | "categories">): Names {
  const lines = new Map(plant.lines.map((l) => [l.code, l.name]));
  const shifts = new Map(plant.shifts.map((s) => [s.code, s.name]));
  const categories = new Map(plant.categories.map((c) => [c.code, c.name]));
  const names: Names = {
    line: (code) => lines.get(code) ?? code,
    shift: (code) => shifts.get(code) ?? code,
    category: (code) => categories.get(code) ?? code,
    row: (kind, code, weeks) => {
      if (kind === "history") return code === "current" ? "This window" : code === "baseline" ? `Previous ${weeks ?? 8} weeks` : code;
      return kind === "line" ? names.line(code) : names.shift(code);
    },
  };
  return names;
}

/** Names from plain maps, for tests. */
export function namesOf(maps: { lines?: Record<string, string>; shifts?: Record<string, string>; categories?: Record<string, string> }): Names {
  const toList = (m: Record<string, string> = {}) => Object.entries(m).map(([code, name]) => ({ code, name }));
  return namesFrom({
    lines: toList(maps.lines).map((l) => ({ ...l, id: 0, active: true })),
    shifts: toList(maps.shifts).map((s) => ({ ...s, id: 0, active: true, startTime: "", endTime: "" })),
    categories: toList(maps.categories).map((c) => ({ ...c, id: 0, active: true, family: null })),
  });
}

export function kindLabel(kind: CompareKind, lines: string[] | null, names: Names): string {
  if (kind === "line") return lines ? `Lines ${lines.join(", ")} compared` : "Lines compared";
  if (kind === "shift") return lines && lines.length === 1 ? `Shifts within ${names.line(lines[0])}` : "Shifts compared";
  return lines && lines.length === 1 ? `${names.line(lines[0])} against its past` : "Against its past";
}
