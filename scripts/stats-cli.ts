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
 *   npm run -s stats -- hotspots ... [--self include|exclude] [--alpha A] [--correction none|bonferroni|fdr]
 *   npm run -s stats -- rate-moran --topology ... --id-column COL --events COL --population COL
 *     [--weights ...] [--transform W|B] [--permutations R] [--seed S]
 *   npm run -s stats -- rates --topology ... --id-column COL --events COL --population COL [--weights ...]
 *   npm run -s stats -- residuals --topology ... --id-column COL --value Y --covariates X1,X2
 *     [--weights ...] [--transform W|B] [--alpha A]
 *
 * Extra options (defaults in brackets): --islands keep|exclude|attach [keep],
 * --coordinates geographic|planar [detected from the bounding box],
 * --moments conditional|total (local) [conditional].
 * Defaults: weights queen; transform W (B for getis-ord and hotspots); 999
 * permutations (0 = none, else 99..99,999); seed 1; alpha 0.05; correction
 * fdr; self include (hotspots: Gi*).
 *
 * rate-moran and rates read --events and --population instead of --value:
 * a region whose events or population is empty or not a number is excluded
 * and named (id and column) in a "note:" line; negative events, a
 * population ≤ 0 or events above the population are bad input (exit 2).
 *
 * residuals regresses --value on an intercept and the --covariates (OLS) and
 * tests the residuals: Moran's I with its exact moments and the five Lagrange
 * multiplier tests, with the suggested model at --alpha. A region with an empty
 * or non-numeric value in any of those columns is excluded and named in a
 * "note:" line; collinear covariates or too few regions are bad input (exit 2).
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
  empiricalBayesMoran,
  globalEmpiricalBayesRates,
  hotSpotClasses,
  localEmpiricalBayesRates,
  localGetisOrd,
  localMoran,
  prepareAnalysis,
  regressionDiagnostics,
  regionCentroids,
  summariseWeights,
  topologyRegionIds,
  weightsFromTopology,
  type AnalyticalInference,
  type PermutationSummary,
  type PreparedAnalysis,
} from "../lib/spatial";

class InputError extends Error {}

const commands = ["moran", "local", "geary", "getis-ord", "hotspots", "rate-moran", "rates", "residuals"] as const;
/** Commands that analyse events over a population (--events, --population) instead of --value. */
const rateCommands: readonly Command[] = ["rate-moran", "rates"];
type Command = (typeof commands)[number];

const weightsPattern = /^(queen|rook|knn:\d+(:symmetric)?|band(:(auto|\d+(\.\d+)?))?|idw(:(auto|\d+(\.\d+)?))?(:\d+(\.\d+)?)?)$/i;

const optionsSchema = z
  .object({
    topology: z.string().min(1),
    object: z.string().min(1),
    id: z.string().min(1),
    data: z.string().min(1),
    "id-column": z.string().min(1),
    value: z.string().min(1).optional(),
    events: z.string().min(1).optional(),
    population: z.string().min(1).optional(),
    covariates: z.string().min(1).optional(),
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
    self: z.enum(["include", "exclude"]).default("include"),
  })
  .strict();

type Options = z.infer<typeof optionsSchema>;

const usage =
  "usage: stats <moran|local|geary|getis-ord|hotspots|rate-moran|rates|residuals> --topology FILE --object NAME --id PROP --data FILE.csv --id-column COL " +
  "(--value COL | --events COL --population COL) " +
  "[--weights queen|rook|knn:K|band:KM|idw:KM:POWER] [--transform W|B] [--permutations R] [--seed S] [--alpha A] [--correction none|bonferroni|fdr] " +
  "[--self include|exclude] [--covariates X1,X2]. rate-moran and rates take --events and --population; the others take --value; " +
  "hotspots takes --self; residuals takes --value and --covariates.";

function parseArguments(argv: readonly string[]): { command: Command; options: Options } {
  const [command, ...rest] = argv;
  if (command === undefined) throw new InputError(usage);
  if (!(commands as readonly string[]).includes(command)) {
    throw new InputError(`Unknown command "${command}"; use moran, local, geary, getis-ord, hotspots, rate-moran, rates or residuals.`);
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
  const options = parsed.data;
  if (rateCommands.includes(command as Command)) {
    if (options.value !== undefined) throw new InputError(`Option --value does not apply to ${command}; give --events and --population.`);
    if (options.events === undefined) throw new InputError("Missing required option --events.");
    if (options.population === undefined) throw new InputError("Missing required option --population.");
    if (options.events === options.population) throw new InputError(`Options --events and --population name the same column "${options.events}".`);
  } else {
    for (const name of ["events", "population"] as const) {
      if (options[name] !== undefined) throw new InputError(`Option --${name} applies only to rate-moran and rates; ${command} takes --value.`);
    }
    if (options.value === undefined) throw new InputError("Missing required option --value.");
  }
  if (raw.self !== undefined && command !== "hotspots") throw new InputError(`Option --self applies only to hotspots.`);
  if (command === "residuals") {
    if (options.covariates === undefined) throw new InputError("Missing required option --covariates (comma-separated column names).");
    covariateColumns(options.covariates, options.value as string);
  } else if (options.covariates !== undefined) {
    throw new InputError(`Option --covariates applies only to residuals.`);
  }
  return { command: command as Command, options };
}

/** The --covariates list: comma-separated, unique, none named "intercept" or equal to --value. */
function covariateColumns(list: string, valueColumn: string): string[] {
  const columns = list.split(",").map((c) => c.trim());
  if (columns.some((c) => c === "")) throw new InputError(`Option --covariates: "${list}" has an empty name; give column names separated by commas.`);
  const repeated = columns.find((c, i) => columns.indexOf(c) !== i);
  if (repeated !== undefined) throw new InputError(`Option --covariates names the column "${repeated}" twice.`);
  if (columns.includes(valueColumn)) throw new InputError(`Option --covariates includes "${valueColumn}", the --value column itself.`);
  if (columns.includes("intercept")) throw new InputError(`Option --covariates cannot name a column "intercept"; the intercept is always included.`);
  return columns;
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
  const [values] = readColumns(path, idColumn, [valueColumn]);
  return values;
}

/** The id column and one or more value columns of the --data CSV, one {@link DataValues} per value column. */
function readColumns(path: string, idColumn: string, valueColumns: readonly string[]): DataValues[] {
  const text = readText(path, "--data");
  const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: "greedy", transformHeader: (h) => h.trim() });
  const fatal = parsed.errors.find((e) => e.type === "Delimiter" || e.type === "Quotes");
  if (fatal) throw new InputError(`The --data file "${path}" is not readable CSV (row ${fatal.row ?? "?"}: ${fatal.message}).`);
  const columns = parsed.meta.fields ?? [];
  for (const column of [idColumn, ...valueColumns]) {
    if (!columns.includes(column)) {
      throw new InputError(`The data has no column "${column}"; its columns are ${quoteFew(columns) || "none"}.`);
    }
  }
  const perColumn = valueColumns.map(() => ({ values: new Map<string, number | null>(), empty: [] as string[], nonNumeric: [] as string[] }));
  const seen = new Set<string>();
  parsed.data.forEach((row, index) => {
    const id = (row[idColumn] ?? "").trim();
    if (id === "") throw new InputError(`Row ${index + 2} of the data has an empty "${idColumn}".`);
    if (seen.has(id)) throw new InputError(`Region id "${id}" appears more than once in the data.`);
    seen.add(id);
    valueColumns.forEach((valueColumn, c) => {
      const { values, empty, nonNumeric } = perColumn[c];
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
  });
  return perColumn;
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

interface AnalysisValues {
  /** One value per region of the data (null: left out). */
  readonly values: Map<string, number | null>;
  /** What was left out and why, for a "note:" line; null when nothing was. */
  readonly excluded: string | null;
  /** Events and populations of the regions with both (rate commands only). */
  readonly rates: { readonly events: Map<string, number>; readonly population: Map<string, number> } | null;
  /** Covariate values of the regions with every value (residuals only), in --covariates order. */
  readonly covariates: { readonly name: string; readonly values: Map<string, number> }[] | null;
}

/** --value and --covariates for residuals: a region needs a number in every one of those columns. */
function regressionValues(options: Options): AnalysisValues {
  const valueColumn = options.value as string;
  const covariateNames = covariateColumns(options.covariates as string, valueColumn);
  const [response, ...covariateData] = readColumns(options.data, options["id-column"], [valueColumn, ...covariateNames]);
  const values = new Map<string, number | null>();
  const covariates = covariateNames.map((name) => ({ name, values: new Map<string, number>() }));
  const missing: string[] = [];
  for (const [id, v] of response.values) {
    const absent = [valueColumn, ...covariateNames].filter((_, c) => (c === 0 ? v : covariateData[c - 1].values.get(id)) === null);
    if (absent.length > 0) {
      missing.push(`"${id}" (column ${absent.map((c) => `"${c}"`).join(" and ")})`);
      values.set(id, null);
      continue;
    }
    values.set(id, v);
    covariateData.forEach((data, c) => covariates[c].values.set(id, data.values.get(id) as number));
  }
  const named = missing.slice(0, 5).join(", ") + (missing.length > 5 ? ` and ${missing.length - 5} more` : "");
  const excluded = missing.length > 0 ? `${missing.length} region(s) with an empty or non-numeric value: ${named}` : null;
  return { values, excluded, rates: null, covariates };
}

/** --value for most commands; events over population for the rate commands (checked here, at the edge). */
function analysisValues(command: Command, options: Options): AnalysisValues {
  if (command === "residuals") return regressionValues(options);
  if (!rateCommands.includes(command)) {
    const valueColumn = options.value as string;
    const data = readData(options.data, options["id-column"], valueColumn);
    const parts: string[] = [];
    if (data.nonNumeric.length > 0) parts.push(`${data.nonNumeric.length} non-numeric value(s) (${quoteFew(data.nonNumeric)})`);
    if (data.empty.length > 0) parts.push(`${data.empty.length} empty value(s) (${quoteFew(data.empty)})`);
    return {
      values: data.values,
      excluded: parts.length > 0 ? `${parts.join(" and ")} in column "${valueColumn}"` : null,
      rates: null,
      covariates: null,
    };
  }
  const eventsColumn = options.events as string;
  const populationColumn = options.population as string;
  const [eventsData, populationData] = readColumns(options.data, options["id-column"], [eventsColumn, populationColumn]);
  const values = new Map<string, number | null>();
  const events = new Map<string, number>();
  const population = new Map<string, number>();
  const missing: string[] = [];
  for (const [id, o] of eventsData.values) {
    const p = populationData.values.get(id) ?? null;
    const absent = [o === null ? eventsColumn : null, p === null ? populationColumn : null].filter((c): c is string => c !== null);
    if (o === null || p === null) {
      missing.push(`"${id}" (column ${absent.map((c) => `"${c}"`).join(" and ")})`);
      values.set(id, null);
      continue;
    }
    if (o < 0) throw new InputError(`Region "${id}": events in column "${eventsColumn}" are ${o}; events must be ≥ 0.`);
    if (p <= 0) throw new InputError(`Region "${id}": population in column "${populationColumn}" is ${p}; the population must be > 0.`);
    if (o > p) throw new InputError(`Region "${id}": events (${o}, column "${eventsColumn}") exceed the population (${p}, column "${populationColumn}").`);
    events.set(id, o);
    population.set(id, p);
    values.set(id, o / p);
  }
  if (events.size === 0) {
    throw new InputError(`No region has a number in both column "${eventsColumn}" and column "${populationColumn}".`);
  }
  const named = missing.slice(0, 5).join(", ") + (missing.length > 5 ? ` and ${missing.length - 5} more` : "");
  const excluded = missing.length > 0 ? `${missing.length} region(s) with an empty or non-numeric value: ${named}` : null;
  return { values, excluded, rates: { events, population }, covariates: null };
}

/** Events and populations aligned with the prepared regions. */
function alignedCounts(rates: NonNullable<AnalysisValues["rates"]>, ids: readonly string[]): { events: number[]; population: number[] } {
  return { events: ids.map((id) => rates.events.get(id) as number), population: ids.map((id) => rates.population.get(id) as number) };
}

function run(argv: readonly string[]): { output: unknown; notes: string[] } {
  const { command, options } = parseArguments(argv);
  const topology = readTopology(options.topology);
  const data = analysisValues(command, options);
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
  const transformLetter = options.transform ?? (command === "getis-ord" || command === "hotspots" ? "B" : "W");
  const points = options.islands === "attach" ? regionCentroids(topology, { ...regionOptions, coordinates: options.coordinates }) : undefined;
  const prepared = prepareAnalysis(base, data.values, {
    islandPolicy: options.islands,
    transform: transformLetter === "W" ? "row-standardised" : "binary",
    points,
  });
  const notes: string[] = [];
  if (data.excluded !== null) notes.push(`note: excluded ${data.excluded}; n = ${prepared.ids.length}.`);
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
    case "hotspots": {
      const r = localGetisOrd(prepared.values, prepared.weights, { ...permutationOptions, star: options.self === "include" });
      const { classes } = hotSpotClasses(r, { alpha: options.alpha, correction: options.correction });
      return {
        notes,
        output: {
          n,
          regions: r.regions.map((region, i) => ({
            id: region.id,
            G: region.G,
            expectedG: region.expectedG,
            varianceG: region.varianceG,
            z: region.z,
            p: region.p,
            pseudoP: region.pseudoP,
            class: classes[i],
          })),
        },
      };
    }
    case "rate-moran": {
      const counts = alignedCounts(data.rates as NonNullable<AnalysisValues["rates"]>, prepared.ids);
      const r = empiricalBayesMoran(counts.events, counts.population, prepared.weights, permutationOptions);
      return { notes, output: { n, I: r.I, permutation: permutationFields(r.permutation, options.seed) } };
    }
    case "rates": {
      const counts = alignedCounts(data.rates as NonNullable<AnalysisValues["rates"]>, prepared.ids);
      const global = globalEmpiricalBayesRates(counts.events, counts.population);
      const local = localEmpiricalBayesRates(counts.events, counts.population, prepared.weights);
      return {
        notes,
        output: {
          n,
          regions: prepared.ids.map((id, i) => ({
            id,
            events: counts.events[i],
            population: counts.population[i],
            raw: global.raw[i],
            smoothedGlobal: global.smoothed[i],
            smoothedLocal: local.smoothed[i],
          })),
        },
      };
    }
    case "residuals": {
      const covariates = (data.covariates as NonNullable<AnalysisValues["covariates"]>).map(({ name, values }) => ({
        name,
        values: prepared.ids.map((id) => values.get(id) as number),
      }));
      const r = regressionDiagnostics(prepared.values, covariates, prepared.weights, { alpha: options.alpha });
      const byName = (pick: (c: (typeof r.fit.coefficients)[number]) => number) =>
        Object.fromEntries(r.fit.coefficients.map((c) => [c.name, pick(c)]));
      const test = (t: { statistic: number; df: number; p: number }) => ({ statistic: t.statistic, df: t.df, p: t.p });
      return {
        notes,
        output: {
          n,
          k: r.fit.k,
          weights,
          coefficients: byName((c) => c.estimate),
          standardErrors: byName((c) => c.standardError),
          tValues: byName((c) => c.t),
          pValues: byName((c) => c.p),
          rSquared: r.fit.rSquared,
          adjustedRSquared: r.fit.adjustedRSquared,
          sigma2: r.fit.sigma2,
          moran: {
            I: r.moran.I,
            expectedI: r.moran.expectedI,
            variance: r.moran.variance,
            z: r.moran.z,
            pTwoSided: r.moran.pTwoSided,
            pGreater: r.moran.pGreater,
          },
          lagrange: {
            error: test(r.lagrange.error),
            lag: test(r.lagrange.lag),
            robustError: test(r.lagrange.robustError),
            robustLag: test(r.lagrange.robustLag),
            combined: test(r.lagrange.combined),
          },
          alpha: options.alpha,
          suggestion: r.suggestion,
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
