import { runChangeMessage } from "@/components/runs/run-announcer";

const run = (state: string, periodsDone = 0, resultsTotal = 8) => ({ id: 1, number: 7, state, periodsDone, resultsTotal });

describe("what the run announcer says between two polls", () => {
  it("says when a run is queued, starts, finishes, fails or is cancelled", () => {
    expect(runChangeMessage(undefined, run("queued"))).toBe("Run 7 queued.");
    expect(runChangeMessage(run("queued"), run("running"))).toBe("Run 7 started.");
    expect(runChangeMessage(run("running"), run("completed", 8))).toBe("Run 7 finished.");
    expect(runChangeMessage(run("running"), run("failed"))).toBe("Run 7 failed.");
    expect(runChangeMessage(run("queued"), run("cancelled"))).toBe("Run 7 was cancelled.");
  });

  it("reports progress only when it crosses a quarter, and says nothing otherwise", () => {
    expect(runChangeMessage(run("running", 1), run("running", 2))).toBe("Run 7: 25 % done.");
    expect(runChangeMessage(run("running", 2), run("running", 3))).toBeNull();
    expect(runChangeMessage(run("running", 7), run("running", 8))).toBeNull();
    expect(runChangeMessage(run("completed", 8), run("completed", 8))).toBeNull();
    expect(runChangeMessage(undefined, run("completed", 8))).toBeNull();
  });
});
