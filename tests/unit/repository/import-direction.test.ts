import { cycles, folderGraph, importGraph, layerOf, sourceFiles, upwardImports } from "./import-graph";

// Imports run one way: entry points (app, worker, scripts) → components → lib
// domains → the route wrapper → identity and access → shared infrastructure
// (with lib/http's error classes and parsers) → models. No loops between files, none between parts of lib/. This test keeps
// it so; the rules themselves are checked first on made-up graphs, so a rule
// that could never fire would fail here.

describe("the import rules catch what they are meant to catch", () => {
  it("places files in their layers", () => {
    expect(layerOf("models/run.ts").rank).toBe(0);
    expect(layerOf("lib/jobs/queues.ts").name).toBe("shared infrastructure");
    expect(layerOf("lib/db.ts").name).toBe("shared infrastructure");
    expect(layerOf("lib/auth/guard.ts").name).toBe("identity and access (lib/auth)");
    expect(layerOf("lib/http/route.ts").name).toBe("HTTP core (lib/http/route.ts)");
    expect(layerOf("lib/http/errors.ts").name).toBe("shared infrastructure");
    expect(layerOf("lib/runs/service.ts").name).toBe("lib domains");
    expect(layerOf("components/maps/map-screen.tsx").name).toBe("components");
    expect(layerOf("worker/handlers.ts").name).toBe("entry points (app, worker, scripts, proxy)");
  });

  it("reports a model importing lib/, a queue importing a domain and a domain importing a component", () => {
    const graph = new Map([
      ["models/index.ts", ["lib/db.ts"]],
      ["lib/jobs/handlers.ts", ["lib/runs/worker.ts"]],
      ["lib/runs/worker.ts", ["components/maps/legend.tsx", "lib/jobs/queues.ts"]],
      ["app/page.tsx", ["lib/runs/worker.ts"]],
    ]);
    expect(upwardImports(graph)).toEqual([
      "lib/jobs/handlers.ts → lib/runs/worker.ts (shared infrastructure imports lib domains)",
      "lib/runs/worker.ts → components/maps/legend.tsx (lib domains imports components)",
      "models/index.ts → lib/db.ts (models imports shared infrastructure)",
    ]);
  });

  it("reports a loop of files and a loop of lib folders, not a one-way chain", () => {
    const loop = new Map([
      ["lib/auth/a.ts", ["lib/auth/b.ts"]],
      ["lib/auth/b.ts", ["lib/auth/a.ts"]],
      ["lib/runs/x.ts", ["lib/intake/y.ts"]],
      ["lib/intake/y.ts", ["lib/spatial/z.ts"]],
      ["lib/spatial/z.ts", []],
      ["lib/digests/d.ts", ["lib/team/t.ts"]],
      ["lib/team/t.ts", ["lib/team/u.ts"]],
      ["lib/team/u.ts", ["lib/digests/e.ts"]],
    ]);
    expect(cycles(loop)).toEqual([["lib/auth/a.ts", "lib/auth/b.ts"]]);
    expect(cycles(folderGraph(loop))).toEqual([["lib/digests", "lib/team"]]);
  });
});

describe("the application's imports", () => {
  const graph = importGraph();

  it("reads the application's sources", () => {
    const files = sourceFiles();
    expect(files).toEqual(expect.arrayContaining(["proxy.ts", "lib/db.ts", "lib/runs/service.ts", "models/index.ts"]));
    expect(files.some((f) => f.startsWith("app/api/"))).toBe(true);
    expect([...graph.values()].flat().length).toBeGreaterThan(500);
  });

  it("never run up the layers", () => {
    expect(upwardImports(graph)).toEqual([]);
  });

  it("make no loop between files, type-only imports included", () => {
    expect(cycles(graph)).toEqual([]);
  });

  it("make no loop between the parts of lib/", () => {
    expect(cycles(folderGraph(graph))).toEqual([]);
  });
});
