import { deadAfterSeconds, leaseSettingsFrom, presumedDead, workerLabelFrom } from "@/lib/jobs/liveness";

const settings = { heartbeatSeconds: 2, leaseSeconds: 120 };

describe("when a worker is presumed dead", () => {
  it("a worker whose lock is free is dead only after three missed heartbeats", () => {
    expect(deadAfterSeconds(settings)).toBe(6);
    expect(presumedDead({ lockFree: true, heartbeatAgeSeconds: 5.9 }, settings)).toBe(false);
    expect(presumedDead({ lockFree: true, heartbeatAgeSeconds: 6.1 }, settings)).toBe(true);
  });

  it("a worker still holding its lock is alive until its lease runs out", () => {
    expect(presumedDead({ lockFree: false, heartbeatAgeSeconds: 119 }, settings)).toBe(false);
    expect(presumedDead({ lockFree: false, heartbeatAgeSeconds: 121 }, settings)).toBe(true);
  });
});

describe("worker lease settings", () => {
  it("default to a 2 s heartbeat and a 120 s lease", () => {
    expect(leaseSettingsFrom({})).toEqual({ heartbeatSeconds: 2, leaseSeconds: 120 });
    expect(leaseSettingsFrom({ WORKER_HEARTBEAT_SECONDS: "0.5", WORKER_LEASE_SECONDS: "30" })).toEqual({ heartbeatSeconds: 0.5, leaseSeconds: 30 });
  });

  it("refuse a lease no longer than three heartbeats, naming the variable", () => {
    expect(() => leaseSettingsFrom({ WORKER_HEARTBEAT_SECONDS: "10", WORKER_LEASE_SECONDS: "30" })).toThrow(
      "Worker setting WORKER_LEASE_SECONDS: must be more than 3 heartbeats",
    );
    expect(() => leaseSettingsFrom({ WORKER_HEARTBEAT_SECONDS: "soon" })).toThrow("Worker setting WORKER_HEARTBEAT_SECONDS:");
  });

  it("label a worker by WORKER_LABEL, else host:pid, and refuse labels with spaces or markup", () => {
    expect(workerLabelFrom({}, "box", 42)).toBe("box:42");
    expect(workerLabelFrom({ WORKER_LABEL: "eu-1.worker-a" }, "box", 42)).toBe("eu-1.worker-a");
    expect(() => workerLabelFrom({ WORKER_LABEL: "<b>a b</b>" }, "box", 42)).toThrow("Worker setting WORKER_LABEL: letters, digits and . : @ - _ only");
  });
});
