import { z } from "zod";
import { idFromText, idText, parseIdParam, parseSearch, PG_INT4_MAX } from "@/lib/http/params";

// The one id and search-parameter parser of every route (lib/http/params.ts).

describe("idText", () => {
  it("accepts positive integers given as strings", () => {
    expect(idText().parse("42")).toBe(42);
    expect(idText().parse(String(PG_INT4_MAX))).toBe(PG_INT4_MAX);
  });
  it("refuses zero, negatives, fractions, words, leading zeros, exponents and ids past int4", () => {
    for (const v of ["0", "-1", "1.5", "abc", "007", "1e3", " 7", String(PG_INT4_MAX + 1), "99999999999"]) expect(idText().safeParse(v).success).toBe(false);
  });
});

describe("idFromText", () => {
  it("reads what idText accepts and gives null for anything else", () => {
    expect(idFromText("7")).toBe(7);
    for (const v of [null, undefined, "", "0", "007", "7a", String(PG_INT4_MAX + 1)]) expect(idFromText(v)).toBeNull();
  });
});

describe("parseIdParam", () => {
  it("gives the number, or a 400 naming the parameter", async () => {
    expect(parseIdParam({ runId: "12" }, "runId")).toEqual({ ok: true, value: 12 });
    const bad = parseIdParam({ runId: "-3" }, "runId");
    expect(bad.ok).toBe(false);
    if (bad.ok) return;
    expect(bad.response.status).toBe(400);
    const body = (await bad.response.json()) as { error: string; field: string };
    expect(body.field).toBe("runId");
    expect(body.error.startsWith("runId: ")).toBe(true);
  });
});

describe("parseSearch", () => {
  const schema = z.object({ run: idText("run must be a run number.").nullable().default(null), q: z.string().optional() });
  it("reads the search parameters, absent ones taking their defaults", () => {
    expect(parseSearch(new Request("http://tessera.test/x?q=a"), schema)).toEqual({ ok: true, value: { run: null, q: "a" } });
    expect(parseSearch(new Request("http://tessera.test/x?run=3"), schema)).toEqual({ ok: true, value: { run: 3 } });
  });
  it("answers 400 naming the parameter that does not fit", async () => {
    const bad = parseSearch(new Request("http://tessera.test/x?run=abc"), schema);
    expect(bad.ok).toBe(false);
    if (bad.ok) return;
    expect(bad.response.status).toBe(400);
    expect(await bad.response.json()).toEqual({
      error: "run: run must be a run number.",
      field: "run",
      issues: [{ field: "run", message: "run must be a run number." }],
    });
  });
});
