/**
 * Tessera statistics CLI (docs/statistics.md, "Command line") — the batch entry to lib/spatial.
 *
 *   npm run -s stats -- moran --topology FILE --object NAME --id PROP
 *     --data FILE.csv --id-column COL --value COL
 *     [--weights queen|rook|knn:K|band:KM|idw:KM:POWER] [--transform W|B]
 *     [--permutations R] [--seed S]
 *   npm run -s stats -- local ... [--alpha A] [--correction none|bonferroni|fdr]
 *   npm run -s stats -- geary ...
 *   npm run -s stats -- getis-ord ...
 *
 * Extra options (defaults in brackets): --islands keep|exclude|attach [keep],
 * --coordinates geographic|planar [detected from the bounding box],
 * --moments conditional|total (local) [conditional].
 * Defaults: weights queen; transform W (B for getis-ord); 999 permutations
 * (0 = none, else 99..99,999); seed 1; alpha 0.05; correction fdr.
 *
 * Prints one JSON object on stdout. Bad input: exit code 2 and one line on
 * stderr naming the problem. Rows whose value is empty or not a number are
 * excluded (never read as zero) and counted in one "note:" line on stderr.
 * All file reading happens here; lib/spatial stays pure.
 */
import { readFileSync } from "node:fs";
import Papa from "papaparse";
import { z } from "zod";
import type { Topology } from "topojson-specification";
import {
  createRandomSource,
  gearyC,
  generalG,
  globalMoran,
  localMoran,
  prepareAnalysis,
  regionCentroids,
  summariseWeights,
  topologyRegionIds,
  weightsFromTopology,
  type AnalyticalInference,
  type PermutationSummary,
  type PreparedAnalysis,
} from "../lib/spatial";

class InputError extends Error {}

const commands = ["moran", "local", "geary", "getis-ord"] as const;
type Command = (typeof commands)[number];

const weightsPattern = /^(queen|rook|knn:\d+(:symmetric)?|band(:(auto|\d+(\.\d+)?))?|idw(:(auto|\d+(\.\d+)?))?(:\d+(\.\d+)?)?)$/i;

const optionsSchema = z
  .object({
    topology: z.string().min(1),
    object: z.string().min(1),
    id: z.string().min(1),
    data: z.string().min(1),
    "id-column": z.string().min(1),
    value: z.string().min(1),
    weights: z.string().regex(weightsPattern, "use queen, rook, knn:K, band:KM or idw:KM:POWER").default("queen"),
    transform: z.enum(["W", "B"]).optional(),
    permutations: z.coerce
      .number()
      .int()
      .refine((r) => r === 0 || (r >= 99 && r <= 99999), "must be 0 or an integer from 99 to 99999")
      .default(999),
    seed: z.coerce.number().int().default(1),
    alpha: z.coerce.number().gt(0).lt(1).default(0.05),
    correction: z.enum(["none", "bonferroni", "fdr"]).default("fdr"),
    islands: z.enum(["keep", "exclude", "attach"]).default("keep"),
    coordinates: z.enum(["geographic", "planar"]).optional(),
    moments: z.enum(["conditional", "total"]).default("conditional"),
  })
  .strict();

type Options = z.infer<typeof optionsSchema>;

const usage =
  "usage: stats <moran|local|geary|getis-ord> --topology FILE --object NAME --id PROP --data FILE.csv --id-column COL --value COL " +
  "[--weights queen|rook|knn:K|band:KM|idw:KM:POWER] [--transform W|B] [--permutations R] [--seed S] [--alpha A] [--correction none|bonferroni|fdr]";

function parseArguments(argv: readonly string[]): { command: Command; options: Options } {
  const [command, ...rest] = argv;
  if (command === undefined) throw new InputError(usage);
  if (!(commands as readonly string[]).includes(command)) {
    throw new InputError(`Unknown command "${command}"; use moran, local, geary or getis-ord.`);
  }
  const raw: Record<string, string> = {};
  for (let k = 0; k < rest.length; k++) {
    const token = rest[k];
    if (!token.startsWith("--")) throw new InputError(`Unexpected argument "${token}"; options look like --name value.`);
    const eq = token.indexOf("=");
    const name = eq >= 0 ? token.slice(2, eq) : token.slice(2);
    let value: string | undefined;
    if (eq >= 0) value = token.slice(eq + 1);
    else {
      value = rest[k + 1];
      k++;
    }
    if (value === undefined || (eq < 0 && value.startsWith("--"))) throw new InputError(`Option --${name} needs a value.`);
    if (name in raw) throw new InputError(`Option --${name} is given twice.`);
    raw[name] = value;
  }
  const parsed = optionsSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    if (issue.code === "unrecognized_keys") throw new InputError(`Unknown option ${issue.keys.map((key) => `--${key}`).join(", ")}.`);
    const name = issue.path.join(".");
    const missing = issue.code === "invalid_type" && raw[name] === undefined;
    throw new InputError(missing ? `Missing required option --${name}.` : `Option --${name}: ${issue.message}.`);
  }
  return { command: command as Command, options: parsed.data };
}

function readText(path: string, what: string): string {
  try {
    return readFileSync(path, "utf8");
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw new InputError(`Cannot read the ${what} file "${path}"${code === "ENOENT" ? ": no such file" : `: ${code ?? "unreadable"}`}.`);
  }
}

function readTopology(path: string): Topology {
  const text = readText(path, "--topology");
  try {
    return JSON.parse(text) as Topology;
  } catch {
    throw new InputError(`The --topology file "${path}" is not valid JSON.`);
  }
}

function quoteFew(items: readonly string[]): string {
  const shown = items.slice(0, 5).map((s) => `"${s}"`).join(", ");
  return items.length > 5 ? `${shown} and ${items.length - 5} more` : shown;
}

interface DataValues {
  readonly values: Map<string, number | null>;
  readonly empty: string[];
  readonly nonNumeric: string[];
}

function readData(path: string, idColumn: string, valueColumn: string): DataValues {
  const text = readText(path, "--data");
  const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: "greedy", transformHeader: (h) => h.trim() });
  const fatal = parsed.errors.find((e) => e.type === "Delimiter" || e.type === "Quotes");
  if (fatal) throw new InputError(`The --data file "${path}" is not readable CSV (row ${fatal.row ?? "?"}: ${fatal.message}).`);
  const columns = parsed.meta.fields ?? [];
  for (const column of [idColumn, valueColumn]) {
    if (!columns.includes(column)) {
      throw new InputError(`The data has no column "${column}"; its columns are ${quoteFew(columns) || "none"}.`);
    }
  }
  const values = new Map<string, number | null>();
  const empty: string[] = [];
  const nonNumeric: string[] = [];
  parsed.data.forEach((row, index) => {
    const id = (row[idColumn] ?? "").trim();
    if (id === "") throw new InputError(`Row ${index + 2} of the data has an empty "${idColumn}".`);
    if (values.has(id)) throw new InputError(`Region id "${id}" appears more than once in the data.`);
    const cell = (row[valueColumn] ?? "").trim();
    if (cell === "" || /^(na|nan|null)$/i.test(cell)) {
      empty.push(id);
      values.set(id, null);
      return;
    }
    const v = Number(cell);
    if (!Number.isFinite(v)) {
      nonNumeric.push(id);
      values.set(id, null);
      return;
    }
    values.set(id, v);
  });
  return { values, empty, nonNumeric };
}

function analytical(inference: AnalyticalInference): { variance: number; z: number; pTwoSided: number; pGreater: number } {
  return { variance: inference.variance, z: inference.z, pTwoSided: inference.pTwoSided, pGreater: inference.pGreater };
}

function permutationFields(summary: PermutationSummary | null, seed: number) {
  if (summary === null) return null;
  return {
    permutations: summary.permutations,
    seed,
    mean: summary.mean,
    sd: summary.sd,
    z: summary.z,
    pGreater: summary.pGreater,
    pLess: summary.pLess,
    pTwoSided: summary.pTwoSided,
  };
}

function weightsFields(prepared: PreparedAnalysis, transformLetter: "W" | "B") {
  const summary = summariseWeights(prepared.weights);
  return {
    rule: prepared.weights.rule,
    transform: transformLetter,
    S0: summary.S0,
    S1: summary.S1,
    S2: summary.S2,
    islands: prepared.report.islands.length,
    meanNeighbours: summary.neighbourCounts.mean,
  };
}

function run(argv: readonly string[]): { output: unknown; notes: string[] } {
  const { command, options } = parseArguments(argv);
  const topology = readTopology(options.topology);
  const data = readData(options.data, options["id-column"], options.value);
  const regionOptions = { object: options.object, idProperty: options.id };
  const boundaryIds = topologyRegionIds(topology, regionOptions);
  const boundarySet = new Set(boundaryIds);
  const notInBoundaries = [...data.values.keys()].filter((id) => !boundarySet.has(id));
  if (notInBoundaries.length > 0) {
    throw new InputError(`${notInBoundaries.length} id(s) in the data are not in the boundaries: ${quoteFew(notInBoundaries)}.`);
  }
  const notInData = boundaryIds.filter((id) => !data.values.has(id));
  if (notInData.length > 0) {
    throw new InputError(`${notInData.length} region(s) of the boundaries have no row in the data: ${quoteFew(notInData)}.`);
  }
  const base = weightsFromTopology(topology, options.weights, { ...regionOptions, coordinates: options.coordinates });
  const transformLetter = options.transform ?? (command === "getis-ord" ? "B" : "W");
  const points = options.islands === "attach" ? regionCentroids(topology, { ...regionOptions, coordinates: options.coordinates }) : undefined;
  const prepared = prepareAnalysis(base, data.values, {
    islandPolicy: options.islands,
    transform: transformLetter === "W" ? "row-standardised" : "binary",
    points,
  });
  const notes: string[] = [];
  const excluded = data.empty.length + data.nonNumeric.length;
  if (excluded > 0) {
    const parts: string[] = [];
    if (data.nonNumeric.length > 0) parts.push(`${data.nonNumeric.length} non-numeric value(s) (${quoteFew(data.nonNumeric)})`);
    if (data.empty.length > 0) parts.push(`${data.empty.length} empty value(s) (${quoteFew(data.empty)})`);
    notes.push(`note: excluded ${parts.join(" and ")} in column "${options.value}"; n = ${prepared.ids.length}.`);
  }
  if (prepared.report.droppedCounts["island-excluded"] > 0) {
    notes.push(`note: excluded ${prepared.report.droppedCounts["island-excluded"]} region(s) without neighbours (--islands exclude).`);
  }
  const permutationOptions = { permutations: options.permutations, random: createRandomSource(options.seed) };
  const n = prepared.ids.length;
  const weights = weightsFields(prepared, transformLetter);
  switch (command) {
    case "moran": {
      const r = globalMoran(prepared.values, prepared.weights, permutationOptions);
      return {
        notes,
        output: {
          n,
          weights,
          I: r.I,
          expectedI: r.expectedI,
          normality: analytical(r.normality),
          randomization: analytical(r.randomisation),
          permutation: permutationFields(r.permutation, options.seed),
        },
      };
    }
    case "geary": {
      const r = gearyC(prepared.values, prepared.weights, permutationOptions);
      return {
        notes,
        output: {
          n,
          weights,
          C: r.C,
          expectedC: r.expectedC,
          normality: analytical(r.normality),
          randomization: analytical(r.randomisation),
          permutation: permutationFields(r.permutation, options.seed),
        },
      };
    }
    case "getis-ord": {
      const r = generalG(prepared.values, prepared.weights, permutationOptions);
      return {
        notes,
        output: {
          n,
          weights,
          G: r.G,
          expectedG: r.expectedG,
          // General G has analytical moments under randomisation only (Getis & Ord 1992).
          normality: null,
          randomization: analytical(r.randomisation),
          permutation: permutationFields(r.permutation, options.seed),
        },
      };
    }
    case "local": {
      const r = localMoran(prepared.values, prepared.weights, {
        ...permutationOptions,
        alpha: options.alpha,
        correction: options.correction,
        moments: options.moments,
      });
      return {
        notes,
        output: {
          n,
          regions: r.regions.map((region) => ({
            id: region.id,
            Ii: region.Ii,
            expectedIi: region.expectedIi,
            varianceIi: region.varianceIi,
            z: region.z,
            p: region.p,
            pseudoP: region.pseudoP,
            quadrant: region.quadrant,
            cluster: region.cluster,
          })),
        },
      };
    }
  }
}

function main(): void {
  const first = process.argv[2];
  // Asking for help is not an error: usage on stdout, exit 0.
  if (first === "--help" || first === "-h" || first === "help") {
    process.stdout.write(`${usage}\n`);
    return;
  }
  try {
    const { output, notes } = run(process.argv.slice(2));
    for (const note of notes) process.stderr.write(`${note}\n`);
    process.stdout.write(`${JSON.stringify(output)}\n`);
  } catch (error) {
    const message = (error instanceof Error ? error.message : String(error)).replace(/\s+/g, " ").trim();
    process.stderr.write(`${message}\n`);
    // Errors raised by lib/spatial are input problems too (constant variable,
    // too few regions, unknown object, ...): every failure exits with 2.
    process.exitCode = 2;
  }
}

main();
