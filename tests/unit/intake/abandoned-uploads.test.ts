import { abandonCutoff, describeSweep, isAbandoned, keepReason, type UploadForSweep } from "@/lib/intake/abandoned-uploads";

const now = new Date("2026-12-10T12:00:00Z");
const hoursAgo = (h: number) => new Date(now.getTime() - h * 3_600_000);

/** A ticket issued `age` hours ago whose PUT URL lived one hour, as createUpload issues them. */
function ticket(age: number, overrides: Partial<UploadForSweep> = {}): UploadForSweep {
  return { state: "pending", createdAt: hoursAgo(age), expiresAt: hoursAgo(age - 1), referencedByVersion: false, ...overrides };
}

describe("which uploads are abandoned", () => {
  it("a pending upload older than the setting, its URL expired and named by no version, is abandoned", () => {
    expect(keepReason(ticket(25), now, 24)).toBeNull();
    expect(isAbandoned(ticket(25), now, 24)).toBe(true);
    expect(isAbandoned(ticket(3), now, 2)).toBe(true);
  });

  it("a pending upload younger than the setting is kept, up to and including the cutoff instant", () => {
    expect(keepReason(ticket(23), now, 24)).toBe("too recent");
    expect(keepReason(ticket(24), now, 24)).toBe("too recent");
    expect(keepReason(ticket(24.001), now, 24)).toBeNull();
    expect(keepReason(ticket(25), now, 48)).toBe("too recent");
  });

  it("a failed upload, and a received one no version uses, are abandoned by the same rule as a pending one", () => {
    for (const state of ["failed", "received"] as const) {
      expect(keepReason(ticket(25, { state }), now, 24)).toBeNull();
      expect(keepReason(ticket(23, { state }), now, 24)).toBe("too recent");
      expect(keepReason(ticket(30, { state, expiresAt: new Date(now.getTime() + 60_000) }), now, 24)).toBe("upload URL still valid");
    }
  });

  it("an upload that a boundary or panel version names is never abandoned, in any state and however old", () => {
    for (const state of ["pending", "failed", "received"] as const) {
      expect(keepReason(ticket(24 * 400, { state, referencedByVersion: true }), now, 24)).toBe("referenced by a version");
    }
  });

  it("an old ticket whose PUT URL still works is kept, since a browser may still be sending the file", () => {
    expect(keepReason(ticket(30, { expiresAt: new Date(now.getTime() + 60_000) }), now, 24)).toBe("upload URL still valid");
    expect(keepReason(ticket(30, { expiresAt: now }), now, 24)).toBeNull();
  });

  it("the cutoff is the setting's hours before now, and a non-positive setting is refused", () => {
    expect(abandonCutoff(now, 24).toISOString()).toBe("2026-12-09T12:00:00.000Z");
    expect(abandonCutoff(now, 1).toISOString()).toBe("2026-12-10T11:00:00.000Z");
    expect(() => abandonCutoff(now, 0)).toThrow("abandonAfterHours must be a positive number of hours (got 0)");
    expect(() => abandonCutoff(now, Number.NaN)).toThrow("abandonAfterHours must be a positive number of hours (got NaN)");
  });

  it("the rule leaves its input unchanged", () => {
    const upload = Object.freeze(ticket(50));
    expect(isAbandoned(upload, now, 24)).toBe(true);
    expect(upload.createdAt.toISOString()).toBe(hoursAgo(50).toISOString());
  });
});

describe("the sweep's log line", () => {
  it("says how many were examined, deleted, had a file removed and were kept for each reason", () => {
    expect(describeSweep({ examined: 6, deleted: 3, objectsRemoved: 2, keptInUse: 1, keptStoreFailed: 2 }, 24)).toBe(
      "6 pending, failed or unused upload(s) older than 24 h: 3 deleted (2 stored file(s) removed), 1 kept in use, 2 kept because the file store failed",
    );
  });
});

describe("UPLOAD_ABANDON_HOURS", () => {
  const saved = process.env.UPLOAD_ABANDON_HOURS;
  afterEach(() => {
    if (saved === undefined) delete process.env.UPLOAD_ABANDON_HOURS;
    else process.env.UPLOAD_ABANDON_HOURS = saved;
  });

  /** env() caches its first answer, so each case reads the configuration in a fresh module registry. */
  function abandonHours(value: string | undefined): number {
    if (value === undefined) delete process.env.UPLOAD_ABANDON_HOURS;
    else process.env.UPLOAD_ABANDON_HOURS = value;
    let hours = 0;
    jest.isolateModules(() => {
      // eslint-disable-next-line @typescript-eslint/no-require-imports -- a fresh copy of the cached configuration module per case
      const { env } = require("@/lib/config/env") as typeof import("@/lib/config/env");
      hours = env().UPLOAD_ABANDON_HOURS;
    });
    return hours;
  }

  it("defaults to 24 hours when unset or empty, and reads whole hours", () => {
    expect(abandonHours(undefined)).toBe(24);
    expect(abandonHours("")).toBe(24);
    expect(abandonHours("72")).toBe(72);
    expect(abandonHours(" 6 ")).toBe(6);
  });

  it("refuses a value that is not a whole number of hours from 1 to 8760, naming the variable", () => {
    expect(() => abandonHours("a day")).toThrow("Configuration error in UPLOAD_ABANDON_HOURS: must be a number of hours");
    expect(() => abandonHours("0")).toThrow("Configuration error in UPLOAD_ABANDON_HOURS: must be at least 1 hour");
    expect(() => abandonHours("1.5")).toThrow("Configuration error in UPLOAD_ABANDON_HOURS: must be a whole number of hours");
    expect(() => abandonHours("10000")).toThrow("Configuration error in UPLOAD_ABANDON_HOURS: must be at most 8760 hours (a year)");
  });
});
