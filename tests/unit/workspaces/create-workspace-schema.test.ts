import { createWorkspaceSchema, RESERVED_SLUGS, suggestSlug } from "@/lib/workspaces/schemas";

const fieldOf = (input: unknown): string | null => {
  const parsed = createWorkspaceSchema.safeParse(input);
  return parsed.success ? null : String(parsed.error.issues[0]?.path[0]);
};

describe("the new-workspace schema", () => {
  it("accepts addresses of 3 to 40 lowercase letters, digits and inner hyphens", () => {
    for (const slug of ["abc", "a-1", "regio-noord-2026", "x".repeat(40)]) expect(fieldOf({ name: "Office", slug })).toBeNull();
  });

  it("refuses short, long, upper-case, spaced, hyphen-edged and non-ASCII addresses, naming slug", () => {
    for (const slug of ["ab", "x".repeat(41), "Regio", "re gio", "-abc", "abc-", "région", "a_b", "", 42]) {
      expect(fieldOf({ name: "Office", slug })).toBe("slug");
    }
  });

  it("refuses every reserved address", () => {
    for (const slug of RESERVED_SLUGS) if (slug.length >= 3) expect(fieldOf({ name: "Office", slug })).toBe("slug");
    expect(fieldOf({ name: "Office", slug: "new" })).toBe("slug");
  });

  it("trims the name and takes 1 to 120 characters", () => {
    expect(createWorkspaceSchema.parse({ name: "  Regio Noord  ", slug: "regio" }).name).toBe("Regio Noord");
    expect(fieldOf({ name: "x".repeat(120), slug: "regio" })).toBeNull();
    expect(fieldOf({ name: "x".repeat(121), slug: "regio" })).toBe("name");
    expect(fieldOf({ name: "   ", slug: "regio" })).toBe("name");
  });

  it("refuses control characters and bidirectional overrides in the name, naming name", () => {
    for (const name of ["Nul\u0000", "Tab\there", "New\nline", "Del\u007f", "C1\u0085", "Right\u202eto left", "Iso\u2066late"]) {
      expect(fieldOf({ name, slug: "regio" })).toBe("name");
    }
    expect(fieldOf({ name: "Région Nord – Økonomi & Co.", slug: "regio" })).toBeNull();
  });

  it("suggests an address from a name that the schema then accepts", () => {
    expect(suggestSlug("Région Nord – 2026!")).toBe("region-nord-2026");
    expect(fieldOf({ name: "x", slug: suggestSlug("Regional Statistics Office") })).toBeNull();
  });
});
