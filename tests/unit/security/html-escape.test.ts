import { escapeHtml } from "@/lib/security/html";

describe("text placed into HTML strings (ECharts tooltips)", () => {
  it.each([
    ['"><img src=x onerror=window.__xss=1>', "&quot;&gt;&lt;img src=x onerror=window.__xss=1&gt;"],
    ["<script>window.__xss=1</script>", "&lt;script&gt;window.__xss=1&lt;/script&gt;"],
    ["O'Brien & Sons", "O&#39;Brien &amp; Sons"],
    ["{{7*7}}", "{{7*7}}"],
    ["VM-001", "VM-001"],
  ])("escapes %j so it shows as written", (input, expected) => {
    expect(escapeHtml(input)).toBe(expected);
  });

  it("shows the original text when a browser parses the result", () => {
    // What innerHTML would do, without a DOM: decode the five entities again.
    const decode = (html: string) => html.replace(/&(quot|gt|lt|#39|amp);/g, (_, e: string) => ({ quot: '"', gt: ">", lt: "<", "#39": "'", amp: "&" })[e] ?? "");
    const hostile = `<b onmouseover="x()">&amp;'</b>`;
    expect(escapeHtml(hostile)).not.toMatch(/[<>"']/);
    expect(decode(escapeHtml(hostile))).toBe(hostile);
  });
});
