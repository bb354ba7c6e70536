import { describe, expect, it } from "vitest";
import { escapeHtml, html, num, raw } from "@/lib/review/markup";

// Expected strings written by hand from the HTML standard's escaping rules (&, <, >, and
// the quote characters inside attribute values); no outside tool is needed for these.
describe("markup", () => {
  it("escapes text from the database in content and in attribute values", () => {
    const name = `Seal <leak> & "burr" 'x'`;
    expect(escapeHtml(name)).toBe("Seal &lt;leak&gt; &amp; &quot;burr&quot; &#39;x&#39;");
    expect(html`<td title="${name}">${name}</td>`.html).toBe(
      '<td title="Seal &lt;leak&gt; &amp; &quot;burr&quot; &#39;x&#39;">Seal &lt;leak&gt; &amp; &quot;burr&quot; &#39;x&#39;</td>',
    );
  });

  it("cannot be made to open a tag or leave an attribute", () => {
    const attack = `"><script>alert(1)</script>`;
    const out = html`<a href="/c/${attack}">${attack}</a>`.html;
    expect(out).not.toContain("<script>");
    expect(out.match(/"/g)?.length).toBe(2);
  });

  it("inserts nested markup and arrays as they are, and nothing for null, undefined and false", () => {
    const cells = ["a<", html`<b>b</b>`];
    expect(html`<tr>${cells}${null}${undefined}${false}${0}</tr>`.html).toBe("<tr>a&lt;<b>b</b>0</tr>");
    expect(html`${raw("&nbsp;")}`.html).toBe("&nbsp;");
  });

  it("prints SVG coordinates with one decimal, without -0", () => {
    expect(num(12.345)).toBe("12.3");
    expect(num(-0.04)).toBe("0");
    expect(num(1000)).toBe("1000");
  });
});
