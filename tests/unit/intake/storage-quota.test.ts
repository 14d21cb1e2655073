import { StorageQuotaError, formatMegabytes, quotaRefusal } from "@/lib/intake/storage-quota";

const MB = 1024 * 1024;
const base = { workspaceName: "Veldmark", quotaMb: 10, abandonAfterHours: 24 };

describe("the per-workspace storage quota", () => {
  it("lets an upload through while used plus declared stays within the quota, up to exactly the quota", () => {
    expect(quotaRefusal({ ...base, usedBytes: 0, requestBytes: 1 })).toBeNull();
    expect(quotaRefusal({ ...base, usedBytes: 6 * MB, requestBytes: 4 * MB })).toBeNull();
  });

  it("refuses one byte over, with a 413 naming the workspace, what it uses, what it may use and what to do", () => {
    const refusal = quotaRefusal({ ...base, usedBytes: 6 * MB, requestBytes: 4 * MB + 1 });
    expect(refusal).toBeInstanceOf(StorageQuotaError);
    expect(refusal?.status).toBe(413);
    expect({ used: refusal?.usedBytes, quota: refusal?.quotaBytes }).toEqual({ used: 6 * MB, quota: 10 * MB });
    expect(refusal?.message).toBe(
      "Workspace 'Veldmark' uses 6 MB of its 10 MB of file storage, so this 4 MB file does not fit. " +
        "Failed and unused uploads are removed 24 hours after they were started; to make room sooner, ask the operator to raise WORKSPACE_STORAGE_QUOTA_MB.",
    );
  });

  it("refuses a single file larger than the whole quota even in an empty workspace", () => {
    expect(quotaRefusal({ ...base, usedBytes: 0, requestBytes: 11 * MB })?.message).toMatch(/^Workspace 'Veldmark' uses 0 MB of its 10 MB of file storage, so this 11 MB file does not fit\./);
  });

  it("refuses a quota that is not a positive number rather than letting everything through", () => {
    expect(() => quotaRefusal({ ...base, quotaMb: 0, usedBytes: 0, requestBytes: 1 })).toThrow("quotaMb must be a positive number of megabytes (got 0)");
    expect(() => quotaRefusal({ ...base, quotaMb: Number.NaN, usedBytes: 0, requestBytes: 1 })).toThrow("(got NaN)");
  });

  it("writes sizes as MB with at most one decimal, and never a non-zero size as 0", () => {
    expect(formatMegabytes(0)).toBe("0 MB");
    expect(formatMegabytes(1)).toBe("0.1 MB");
    expect(formatMegabytes(1.5 * MB)).toBe("1.5 MB");
    expect(formatMegabytes(5120 * MB)).toBe("5,120 MB");
  });
});

describe("WORKSPACE_STORAGE_QUOTA_MB", () => {
  const saved = process.env.WORKSPACE_STORAGE_QUOTA_MB;
  afterEach(() => {
    if (saved === undefined) delete process.env.WORKSPACE_STORAGE_QUOTA_MB;
    else process.env.WORKSPACE_STORAGE_QUOTA_MB = saved;
  });

  /** env() caches its first answer, so each case reads the configuration in a fresh module registry. */
  function quotaMb(value: string | undefined): number {
    if (value === undefined) delete process.env.WORKSPACE_STORAGE_QUOTA_MB;
    else process.env.WORKSPACE_STORAGE_QUOTA_MB = value;
    let mb = 0;
    jest.isolateModules(() => {
      // eslint-disable-next-line @typescript-eslint/no-require-imports -- a fresh copy of the cached configuration module per case
      const { env } = require("@/lib/config/env") as typeof import("@/lib/config/env");
      mb = env().WORKSPACE_STORAGE_QUOTA_MB;
    });
    return mb;
  }

  it("defaults to 5120 MB when unset or empty, and reads whole megabytes", () => {
    expect(quotaMb(undefined)).toBe(5120);
    expect(quotaMb("")).toBe(5120);
    expect(quotaMb(" 200 ")).toBe(200);
  });

  it("refuses a value that is not a whole number of megabytes from 1 to 1048576, naming the variable", () => {
    expect(() => quotaMb("lots")).toThrow("Configuration error in WORKSPACE_STORAGE_QUOTA_MB: must be a number of megabytes");
    expect(() => quotaMb("0")).toThrow("Configuration error in WORKSPACE_STORAGE_QUOTA_MB: must be at least 1 MB");
    expect(() => quotaMb("1.5")).toThrow("Configuration error in WORKSPACE_STORAGE_QUOTA_MB: must be a whole number of megabytes");
    expect(() => quotaMb("2000000")).toThrow("Configuration error in WORKSPACE_STORAGE_QUOTA_MB: must be at most 1048576 MB (1 TB)");
  });
});
