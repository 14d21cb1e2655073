/**
 * Benchmark entry point: `npm run -s bench` prints human-readable lines;
 * `npm run -s bench -- --json` prints `{ results: [...] }` with one object per
 * case. Add further benchmarks by pushing their results below.
 */
import { runEngineBench, timeSpdep, type EngineBenchResult } from "./engine";

const json = process.argv.includes("--json");
const skipR = process.argv.includes("--no-r");
const log = json ? () => undefined : (line: string) => console.log(line);

const results: EngineBenchResult[] = runEngineBench({ log });

if (json) {
  console.log(JSON.stringify({ results }));
} else if (!skipR) {
  const reference = timeSpdep(100, 999);
  if (reference === null) {
    console.log("R with spdep not available: no reference timing.");
  } else {
    const ours = (name: string) => results.find((r) => r.case === name && r.grid === "100x100")?.ms ?? NaN;
    console.log(
      `spdep 100x100 (same lattice, 999 permutations, wall clock): moran.mc ${reference.global.toFixed(0)} ms (ratio ${(reference.global / ours("global-moran")).toFixed(1)}x), ` +
        `localmoran_perm ${reference.local.toFixed(0)} ms (ratio ${(reference.local / ours("local-moran")).toFixed(1)}x)`,
    );
    console.log(
      `spdep 100x100 CPU time: moran.mc ${reference.globalCpu.toFixed(0)} ms, localmoran_perm ${reference.localCpu.toFixed(0)} ms ` +
        "(compare with the CPU ms above; wall-clock ratios are fair only when the machine is otherwise idle)",
    );
  }
}
