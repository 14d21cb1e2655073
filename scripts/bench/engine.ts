/**
 * Engine benchmark (the performance targets in docs/benchmarks.md): global Moran's I with 999
 * permutations and local Moran's I with 999 conditional permutations on
 * row-standardised rook lattices of 50×50, 100×100 and 200×200 cells, one
 * thread. Reports wall-clock and CPU ms (best, and median, of five
 * repetitions after a warm-up) and ns per permutation-link. If R with spdep
 * is installed, times spdep::moran.mc and spdep::localmoran_perm on the same
 * lattice (100×100) and prints the ratio.
 */
import { spawnSync } from "node:child_process";
import { createRandomSource, globalMoran, latticeWeights, localMoran, rowStandardisedWeights } from "../../lib/spatial";

/** One benchmark case (the `--json` output of `npm run bench`). */
export interface EngineBenchResult {
  readonly case: "global-moran" | "local-moran";
  readonly grid: string;
  readonly n: number;
  readonly links: number;
  readonly permutations: number;
  /** Best wall-clock ms of the repetitions. */
  readonly ms: number;
  /** Median wall-clock ms, and CPU ms (best repetition's and median), of the repetitions. */
  readonly medianMs: number;
  readonly cpuMs: number;
  readonly medianCpuMs: number;
}

/** Options of {@link runEngineBench}. */
export interface EngineBenchOptions {
  readonly grids?: readonly number[];
  readonly permutations?: number;
  readonly repetitions?: number;
  readonly log?: (line: string) => void;
}

interface Timing {
  /** Best wall-clock ms, and the process CPU ms of that repetition. */
  readonly ms: number;
  readonly cpuMs: number;
  /** Medians over the repetitions (wall and CPU separately). */
  readonly medianMs: number;
  readonly medianCpuMs: number;
}

const median = (values: number[]): number => {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = sorted.length >> 1;
  return sorted.length % 2 ? sorted[middle] : (sorted[middle - 1] + sorted[middle]) / 2;
};

/** Best and median wall-clock ms over the repetitions (after a warm-up), with the process CPU ms. */
function timeBest(repetitions: number, run: () => void): Timing {
  run(); // warm-up (JIT)
  let best = Infinity;
  let bestCpu = Infinity;
  const walls: number[] = [];
  const cpus: number[] = [];
  for (let r = 0; r < repetitions; r++) {
    const cpuStart = process.cpuUsage();
    const start = process.hrtime.bigint();
    run();
    const ms = Number(process.hrtime.bigint() - start) / 1e6;
    const cpu = process.cpuUsage(cpuStart);
    const cpuMs = (cpu.user + cpu.system) / 1000;
    walls.push(ms);
    cpus.push(cpuMs);
    if (ms < best) {
      best = ms;
      bestCpu = cpuMs;
    }
  }
  return { ms: best, cpuMs: bestCpu, medianMs: median(walls), medianCpuMs: median(cpus) };
}

function line(name: string, grid: string, n: number, links: number, permutations: number, t: Timing): string {
  const perLink = (ms: number) => ((ms * 1e6) / (permutations * links)).toFixed(2);
  return (
    `${name.padEnd(12)} ${grid.padStart(7)}: n=${n} links=${links} R=${permutations}: ` +
    `${t.ms.toFixed(1)} ms wall (${perLink(t.ms)} ns per permutation-link), ${t.cpuMs.toFixed(1)} ms CPU (${perLink(t.cpuMs)} ns); ` +
    `median ${t.medianMs.toFixed(1)} ms wall, ${t.medianCpuMs.toFixed(1)} ms CPU`
  );
}

/** Runs the engine cases and returns one result per case and grid. */
export function runEngineBench(options: EngineBenchOptions = {}): EngineBenchResult[] {
  const grids = options.grids ?? [50, 100, 200];
  const permutations = options.permutations ?? 999;
  const repetitions = options.repetitions ?? 5;
  const log = options.log ?? (() => undefined);
  const results: EngineBenchResult[] = [];
  for (const side of grids) {
    const weights = rowStandardisedWeights(latticeWeights(side, side, "rook"));
    const n = weights.ids.length;
    const links = weights.neighbours.length;
    // invented values: a smooth trend plus seeded noise
    const random = createRandomSource(2024);
    const values = Float64Array.from({ length: n }, (_, i) => Math.floor(i / side) * 0.05 + random.nextFloat());
    const grid = `${side}x${side}`;
    const global = timeBest(repetitions, () => {
      globalMoran(values, weights, { permutations, random: createRandomSource(1) });
    });
    results.push({ case: "global-moran", grid, n, links, permutations, ms: global.ms, medianMs: global.medianMs, cpuMs: global.cpuMs, medianCpuMs: global.medianCpuMs });
    log(line("global-moran", grid, n, links, permutations, global));
    const local = timeBest(repetitions, () => {
      localMoran(values, weights, { permutations, random: createRandomSource(1) });
    });
    results.push({ case: "local-moran", grid, n, links, permutations, ms: local.ms, medianMs: local.medianMs, cpuMs: local.cpuMs, medianCpuMs: local.medianCpuMs });
    log(line("local-moran", grid, n, links, permutations, local));
  }
  return results;
}

/** spdep timings in ms: wall clock and CPU (user + system) of the R process. */
export interface SpdepTimings {
  readonly global: number;
  readonly local: number;
  readonly globalCpu: number;
  readonly localCpu: number;
}

/** Times spdep on a side×side rook lattice (row-standardised); null when R/spdep is unavailable. */
export function timeSpdep(side: number, permutations: number): SpdepTimings | null {
  const probe = spawnSync("Rscript", ["-e", "suppressPackageStartupMessages(library(spdep))"], { encoding: "utf8" });
  if (probe.status !== 0) return null;
  const script = `
suppressPackageStartupMessages(library(spdep))
set.seed(1)
side <- ${side}
nb <- cell2nb(side, side, type = "rook")
lw <- nb2listw(nb, style = "W")
x <- rep(0:(side - 1), each = side) * 0.05 + runif(side * side)
g <- system.time(moran.mc(x, lw, nsim = ${permutations}))
l <- system.time(localmoran_perm(x, lw, nsim = ${permutations}))
cat(sprintf("%.4f %.4f %.4f %.4f\\n", g[["elapsed"]], l[["elapsed"]], g[["user.self"]] + g[["sys.self"]], l[["user.self"]] + l[["sys.self"]]))
`;
  const run = spawnSync("Rscript", ["-e", script], { encoding: "utf8" });
  if (run.status !== 0) return null;
  const [g, l, gCpu, lCpu] = run.stdout.trim().split(/\s+/).map(Number);
  if (![g, l, gCpu, lCpu].every(Number.isFinite)) return null;
  return { global: g * 1000, local: l * 1000, globalCpu: gCpu * 1000, localCpu: lCpu * 1000 };
}
