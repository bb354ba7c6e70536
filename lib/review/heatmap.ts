/**
 * The diverging colour scale of the residual heatmap. ColorBrewer's RdBu (9 classes),
 * which stays readable under the common forms of colour-vision deficiency: red for
 * more defects than expected, blue for fewer, near-white for about as expected. The
 * scale is symmetric around 0 and its class edges are fixed in residual units, with the
 * driver critical value as one edge, so the same colour means the same thing on every
 * window. Colour is never the only cue: every cell prints its signed value, and cells
 * beyond the critical value carry a marker (▲ more, ▼ fewer) and a text label.
 */

/** RdBu 9-class, from strongest "fewer" (blue) to strongest "more" (red). */
export const RDBU_9 = ["#2166ac", "#4393c3", "#92c5de", "#d1e5f0", "#f7f7f7", "#fddbc7", "#f4a582", "#d6604d", "#b2182b"] as const;

const INK = "#1d2433";
const BLACK = "#000000";
const WHITE = "#ffffff";

export interface HeatClass {
  /** Lower and upper residual bounds of the class; −Infinity/Infinity at the ends. */
  from: number;
  to: number;
  fill: string;
  /** Text colour chosen for contrast against fill. */
  text: string;
  label: string;
}

export interface HeatScale {
  critical: number;
  /** Positive class edges, ascending, e.g. [1, 2, 3.3, 6.6]. */
  edges: number[];
  /** Classes from most negative to most positive (2·edges.length + 1 of them). */
  classes: HeatClass[];
}

export interface HeatCell {
  value: number;
  /** Index of the cell's class in the scale, 0 (strongest "fewer") to 8 (strongest "more"): the CSS class heat-k0…heat-k8. */
  index: number;
  fill: string;
  text: string;
  /** Beyond ±critical. */
  beyond: boolean;
  /** "▲" more than expected beyond critical, "▼" fewer, "" otherwise. */
  marker: "▲" | "▼" | "";
  /** Signed value as printed: "+7.9", "−3.1". */
  printed: string;
  /** Words for screen readers and print: "+7.9, more than expected, beyond ±3.29". */
  description: string;
}

function channel(c: number): number {
  const s = c / 255;
  return s <= 0.03928 ? s / 12.92 : ((s + 0.055) / 1.055) ** 2.4;
}

/** WCAG relative luminance of a #rrggbb colour. */
export function luminance(hex: string): number {
  const n = Number.parseInt(hex.slice(1), 16);
  return 0.2126 * channel((n >> 16) & 255) + 0.7152 * channel((n >> 8) & 255) + 0.0722 * channel(n & 255);
}

/** WCAG contrast ratio of two #rrggbb colours (1–21). */
export function contrastRatio(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi + 0.05) / (lo + 0.05);
}

// The page's ink where it reaches 4.5:1, else whichever of black and white contrasts more.
function textOn(fill: string): string {
  if (contrastRatio(fill, INK) >= 4.5) return INK;
  return contrastRatio(fill, BLACK) >= contrastRatio(fill, WHITE) ? BLACK : WHITE;
}

function signedText(x: number): string {
  const t = Math.abs(x).toFixed(1);
  if (Number(t) === 0) return "0.0";
  return `${x < 0 ? "−" : "+"}${t}`;
}

function edgeText(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toFixed(1);
}

/**
 * Scale with edges at 1, 2, the critical value and twice it (when the critical value is
 * above 2; otherwise 1, critical, 2·critical, 3·critical), mirrored for negatives.
 */
export function heatScale(critical: number): HeatScale {
  if (!(critical > 0) || !Number.isFinite(critical)) throw new RangeError(`critical value must be positive, got ${critical}`);
  const edges = critical > 2 ? [1, 2, critical, 2 * critical] : critical > 1 ? [1, critical, 2 * critical, 3 * critical] : [critical, 2 * critical, 3 * critical, 4 * critical];
  const bounds = [Number.NEGATIVE_INFINITY, ...[...edges].reverse().map((e) => -e), ...edges, Number.POSITIVE_INFINITY];
  // bounds has 2·4 + 2 = 10 entries → 9 classes; the middle class is (−edges[0], edges[0]).
  const classes: HeatClass[] = [];
  for (let k = 0; k < RDBU_9.length; k++) {
    const from = bounds[k];
    const to = bounds[k + 1];
    const fill = RDBU_9[k];
    let label: string;
    if (from === Number.NEGATIVE_INFINITY) label = `below −${edgeText(to === undefined ? 0 : -to)}`;
    else if (to === Number.POSITIVE_INFINITY) label = `above +${edgeText(from)}`;
    else if (from < 0 && to > 0) label = `−${edgeText(to)} to +${edgeText(to)}`;
    else label = `${signedText(from).replace(/\.0$/, "")} to ${signedText(to).replace(/\.0$/, "")}`;
    classes.push({ from, to, fill, text: textOn(fill), label });
  }
  return { critical, edges, classes };
}

/** The class holding a value; a value exactly on an edge belongs to the class nearer 0 (as "beyond" is strict). */
export function classOf(scale: HeatScale, value: number): HeatClass {
  return scale.classes[classIndex(scale, value)];
}

function classIndex(scale: HeatScale, value: number): number {
  const a = Math.abs(value);
  // Count how many edges |value| reaches; the same count on either side gives mirrored classes.
  let steps = 0;
  for (const e of scale.edges) if (a > e) steps++;
  const middle = (scale.classes.length - 1) / 2;
  return value >= 0 ? middle + steps : middle - steps;
}

export function heatCell(scale: HeatScale, value: number): HeatCell {
  const index = classIndex(scale, value);
  const c = scale.classes[index];
  const beyond = Math.abs(value) > scale.critical;
  const marker = beyond ? (value > 0 ? "▲" : "▼") : "";
  const printed = signedText(value);
  const sense = value > 0 ? "more than expected" : value < 0 ? "fewer than expected" : "as expected";
  const description = `${printed}, ${sense}${beyond ? `, beyond ±${scale.critical.toFixed(2)}` : ""}`;
  return { value, index, fill: c.fill, text: c.text, beyond, marker, printed, description };
}

/** Legend entries from most negative to most positive, with the marker rule spelled out. */
export function heatLegend(scale: HeatScale): { classes: { index: number; fill: string; text: string; label: string }[]; note: string } {
  return {
    classes: scale.classes.map((c, index) => ({ index, fill: c.fill, text: c.text, label: c.label })),
    note: `▲ more and ▼ fewer than expected, beyond the critical value ±${scale.critical.toFixed(2)} (Bonferroni over the table's cells).`,
  };
}
