/**
 * Static markup built as text, for the big read-only parts of the review screens (the
 * residual and count tables, the server-drawn charts). React renders every element
 * three times on the server (the server component, its serialised payload, the HTML)
 * and builds a fibre for each one when the page hydrates; a 12 × 25 window screen made
 * about 3,300 elements and cost ~100 ms of the server's one thread per view. The same
 * markup built as one string and inserted whole (dangerouslySetInnerHTML) costs a few
 * hundred microseconds and nothing at hydration. Only markup that needs no React state
 * or event handler belongs here.
 *
 * Safety: `html` escapes every interpolated value unless it is itself Markup, so text
 * from the database (line, category and comparison names) cannot open a tag or leave
 * an attribute. Interpolate attribute values inside double quotes only.
 */

/** A piece of markup that is already safe to insert (built by `html` or `raw`). */
export class Markup {
  constructor(readonly html: string) {}
  toString(): string {
    return this.html;
  }
}

const ESCAPES: Record<string, string> = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" };

/**
 * Text escaped for use in element content and in double-quoted attribute values.
 *
 * @example
 * escapeHtml(`Seal <leak> & "burr"`); // "Seal &lt;leak&gt; &amp; &quot;burr&quot;"
 */
export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ESCAPES[c]);
}

function part(value: unknown): string {
  if (value instanceof Markup) return value.html;
  if (value === null || value === undefined || value === false) return "";
  if (Array.isArray(value)) return value.map(part).join("");
  return escapeHtml(String(value));
}

/**
 * Tagged template for markup: `html\`<td class="${cls}">${text}</td>\``. Values are
 * escaped; Markup values and arrays of them are inserted as they are; null, undefined
 * and false insert nothing (for conditional parts).
 *
 * Cost: one string concatenation per value.
 *
 * @example
 * html`<td title="${"a \"b\""}">${["x", html`<b>y</b>`]}</td>`.html; // '<td title="a &quot;b&quot;">x<b>y</b></td>'
 */
export function html(strings: TemplateStringsArray, ...values: unknown[]): Markup {
  let out = strings[0];
  for (let i = 0; i < values.length; i++) out += part(values[i]) + strings[i + 1];
  return new Markup(out);
}

/**
 * Trusted markup as is (markup this program wrote itself, never text from outside).
 *
 * @example
 * raw("&nbsp;").html; // "&nbsp;"
 */
export function raw(markup: string): Markup {
  return new Markup(markup);
}

/**
 * A number for an SVG coordinate: at most one decimal, no "-0", no exponent.
 *
 * @example
 * num(12.345); // "12.3"
 */
export function num(x: number): string {
  const r = Math.round(x * 10) / 10;
  return r === 0 ? "0" : String(r);
}
