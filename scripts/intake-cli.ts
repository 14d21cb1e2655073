/**
 * Intake CLI: checks boundaries and a panel without storing anything.
 *
 *   npm run -s intake -- check --boundaries FILE --object NAME --id PROP --panel FILE.csv
 *       [--layout long|wide|wide-period] [--decimal .|,] [--delimiter ,|;|tab]
 *       [--region COL --period COL --indicator COL --value COL | --indicators A,B,C]
 *       [--unknown-regions error|drop] [--max-errors N]
 *   npm run -s intake -- inspect --boundaries FILE
 *   npm run -s intake -- preview --panel FILE.csv [--layout long|wide|wide-period]
 *   npm run -s intake -- crosswalk --from FILE --from-object NAME --from-id PROP
 *       --to FILE --to-object NAME --to-id PROP [--coordinates planar|geographic]
 *       [--sliver-tolerance X] [--data FILE.csv --id-column COL --extensive A,B
 *       --intensive C,D [--denominator COL]]
 *   npm run -s intake -- crosswalk --shares FILE.csv [--from … --to … as above, for
 *       their code lists] [--data … --extensive A --intensive C --denominator COL]
 *
 * Prints one JSON object on stdout. Exit 0 when the panel is usable, 1 when it
 * is not (the report says why), 2 for bad arguments or unreadable files (one
 * line on stderr). `crosswalk` exits 0 with its result, 1 when a --shares CSV
 * fails its checks (the report says why), 2 for bad arguments, boundaries or data.
 */
import { createReadStream } from "node:fs";
import { access, readFile } from "node:fs/promises";
import { constants } from "node:fs";
import { parseArgs } from "node:util";
import Papa from "papaparse";
import { areaCrosswalk, CrosswalkGeometryError, type CrosswalkCoordinates } from "../lib/geometry/crosswalk";
import { harmonise, type HarmoniseRule, type MissingTarget } from "../lib/geometry/harmonise";
import {
  boundaryIds,
  BoundaryError,
  checkArgsSchema,
  columnMappingSchema,
  inspectBoundaries,
  layoutSchema,
  loadBoundaries,
  readPanelHeader,
  validatePanel,
  type CheckArgs,
  type ColumnMapping,
  type PanelReport,
  parseNumber,
  validateCrosswalkCsv,
} from "../lib/intake";

class UsageError extends Error {}

const USAGE =
  "usage: intake check --boundaries FILE --object NAME --id PROP --panel FILE.csv [--layout long|wide|wide-period] [--decimal .|,] | intake inspect --boundaries FILE | intake preview --panel FILE.csv | intake crosswalk --from FILE --from-object NAME --from-id PROP --to FILE --to-object NAME --to-id PROP [--coordinates planar|geographic] [--sliver-tolerance X] [--data FILE.csv --id-column COL --extensive A,B --intensive C,D [--denominator COL]] | intake crosswalk --shares FILE.csv [--from … --to …] [--data …]";

const OPTIONS = {
  boundaries: { type: "string" },
  object: { type: "string" },
  id: { type: "string" },
  panel: { type: "string" },
  layout: { type: "string" },
  decimal: { type: "string" },
  delimiter: { type: "string" },
  region: { type: "string" },
  period: { type: "string" },
  indicator: { type: "string" },
  value: { type: "string" },
  indicators: { type: "string" },
  "unknown-regions": { type: "string" },
  "max-errors": { type: "string" },
  from: { type: "string" },
  "from-object": { type: "string" },
  "from-id": { type: "string" },
  to: { type: "string" },
  "to-object": { type: "string" },
  "to-id": { type: "string" },
  coordinates: { type: "string" },
  "sliver-tolerance": { type: "string" },
  data: { type: "string" },
  "id-column": { type: "string" },
  extensive: { type: "string" },
  intensive: { type: "string" },
  denominator: { type: "string" },
  shares: { type: "string" },
} as const;

async function readable(path: string, flag: string): Promise<void> {
  try {
    await access(path, constants.R_OK);
  } catch {
    throw new UsageError(`cannot read ${flag} ${path}: no such file or not readable`);
  }
}

function firstIssue(error: { issues: readonly { path: readonly PropertyKey[]; message: string }[] }): string {
  const issue = error.issues[0];
  // Messages that already name their flag are left alone.
  const where = issue.path.length > 0 && !issue.message.startsWith("--") ? `--${String(issue.path[0]).replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}: ` : "";
  return `${where}${issue.message}`;
}

/** Builds an explicit mapping when the user named columns; otherwise the validator suggests one from the header. */
function mappingFrom(args: CheckArgs): ColumnMapping | undefined {
  const named = args.region ?? args.period ?? args.indicator ?? args.value ?? args.indicators;
  // Wide by period is read from the header; --indicator then names the indicator of columns that are only a period.
  if (named === undefined || args.layout === "wide-period") return undefined;
  const layout = args.layout ?? (args.indicators !== undefined ? "wide" : "long");
  const candidate =
    layout === "wide"
      ? { layout, region: args.region ?? "region", period: args.period ?? "period", indicators: (args.indicators ?? "").split(",").map((s) => s.trim()).filter(Boolean) }
      : { layout, region: args.region ?? "region", period: args.period ?? "period", indicator: args.indicator ?? "indicator", value: args.value ?? "value" };
  const parsed = columnMappingSchema.safeParse(candidate);
  if (!parsed.success) throw new UsageError(`column mapping: ${firstIssue(parsed.error)}`);
  return parsed.data;
}

async function check(values: Record<string, string | undefined>): Promise<number> {
  const parsed = checkArgsSchema.safeParse({
    boundaries: values.boundaries ?? "",
    object: values.object ?? "",
    id: values.id ?? "",
    panel: values.panel ?? "",
    layout: values.layout,
    decimal: values.decimal,
    delimiter: values.delimiter,
    region: values.region,
    period: values.period,
    indicator: values.indicator,
    value: values.value,
    indicators: values.indicators,
    unknownRegions: values["unknown-regions"],
    maxErrors: values["max-errors"],
  });
  if (!parsed.success) throw new UsageError(firstIssue(parsed.error));
  const args = parsed.data;
  await readable(args.boundaries, "--boundaries");
  await readable(args.panel, "--panel");
  const mapping = mappingFrom(args);

  let ids: string[] | undefined;
  let boundaryProblem: string | null = null;
  try {
    ids = boundaryIds(loadBoundaries(await readFile(args.boundaries, "utf8")), args.object, args.id);
  } catch (error) {
    if (!(error instanceof BoundaryError)) throw error;
    boundaryProblem = `boundaries: ${error.message}`;
  }

  const report: PanelReport = await validatePanel({
    source: createReadStream(args.panel, { highWaterMark: 64 * 1024 }),
    boundaryIds: ids,
    options: {
      decimal: args.decimal,
      delimiter: args.delimiter === "tab" ? "\t" : args.delimiter,
      layout: args.layout,
      mapping,
      periodIndicator: args.layout === "wide-period" ? args.indicator : undefined,
      unknownRegions: args.unknownRegions,
      maxErrors: args.maxErrors,
    },
  });
  // A boundary problem makes the check unusable even if the panel itself is clean; the panel is still checked so both are fixed in one round.
  const output = {
    ...report,
    ok: report.ok && boundaryProblem === null,
    boundaries: { file: args.boundaries, object: args.object, idProperty: args.id, regions: ids?.length ?? null },
    errors: boundaryProblem === null ? report.errors : [{ row: null, column: null, message: boundaryProblem }, ...report.errors].slice(0, args.maxErrors),
    errorCount: report.errorCount + (boundaryProblem === null ? 0 : 1),
  };
  process.stdout.write(`${JSON.stringify(output, null, 2)}\n`);
  return output.ok ? 0 : 1;
}

async function inspect(values: Record<string, string | undefined>): Promise<number> {
  if (!values.boundaries) throw new UsageError("--boundaries FILE is required");
  await readable(values.boundaries, "--boundaries");
  try {
    const summary = inspectBoundaries(loadBoundaries(await readFile(values.boundaries, "utf8")));
    process.stdout.write(`${JSON.stringify({ ok: true, ...summary }, null, 2)}\n`);
    return 0;
  } catch (error) {
    if (!(error instanceof BoundaryError)) throw error;
    process.stdout.write(`${JSON.stringify({ ok: false, errors: [{ row: null, column: null, message: error.message }] }, null, 2)}\n`);
    return 1;
  }
}

async function preview(values: Record<string, string | undefined>): Promise<number> {
  if (!values.panel) throw new UsageError("--panel FILE.csv is required");
  const layout = values.layout === undefined ? undefined : layoutSchema.safeParse(values.layout);
  if (layout !== undefined && !layout.success) throw new UsageError(`--layout: ${firstIssue(layout.error)}`);
  await readable(values.panel, "--panel");
  const result = await readPanelHeader(createReadStream(values.panel), layout?.data);
  const ok = result.encodingProblem === null && result.suggestion.mapping !== null;
  process.stdout.write(`${JSON.stringify({ ok, ...result }, null, 2)}\n`);
  return ok ? 0 : 1;
}

function columnList(text: string | undefined): string[] {
  return (text ?? "").split(",").map((c) => c.trim()).filter(Boolean);
}

/**
 * Reads the data CSV of the crosswalk command: one row per source region, the id
 * column and numeric columns ('.' decimal; empty, NA, '..' etc. are missing).
 * @throws UsageError naming the line, column and region for anything else.
 */
function readRegionTable(text: string, file: string, idColumn: string, columns: readonly string[]): Map<string, Map<string, number | null>> {
  const parsed = Papa.parse<string[]>(text.replace(/^\uFEFF/, ""), { skipEmptyLines: true });
  const [header = [], ...rows] = parsed.data;
  const names = header.map((h) => h.trim());
  const at = (name: string) => {
    const i = names.indexOf(name);
    if (i < 0) throw new UsageError(`--data ${file}: no column '${name}' (columns: ${names.join(", ")})`);
    return i;
  };
  const idAt = at(idColumn);
  const positions = columns.map((c) => [c, at(c)] as const);
  const out = new Map(columns.map((c) => [c, new Map<string, number | null>()]));
  const seen = new Map<string, number>();
  rows.forEach((cells, index) => {
    const line = index + 2;
    const id = (cells[idAt] ?? "").trim();
    if (id === "") throw new UsageError(`--data ${file}: line ${line}: empty region code in column '${idColumn}'`);
    const earlier = seen.get(id);
    if (earlier !== undefined) throw new UsageError(`--data ${file}: line ${line}: region '${id}' repeats line ${earlier}`);
    seen.set(id, line);
    for (const [column, i] of positions) {
      const number = parseNumber(cells[i] ?? "", ".");
      if (number.kind === "invalid") throw new UsageError(`--data ${file}: line ${line}, column '${column}', region '${id}': ${number.message}`);
      out.get(column)!.set(id, number.kind === "value" ? number.value : null);
    }
  });
  return out;
}

async function crosswalk(values: Record<string, string | undefined>): Promise<number> {
  const shares = values.shares;
  // With a crosswalk CSV the boundary files are optional (they supply the code lists to check against); without one they are the crosswalk.
  for (const side of ["from", "to"] as const) {
    const given = [side, `${side}-object`, `${side}-id`].filter((flag) => values[flag]);
    if (shares === undefined || given.length > 0) {
      for (const flag of [side, `${side}-object`, `${side}-id`]) if (!values[flag]) throw new UsageError(`--${flag} is required; ${USAGE}`);
    }
  }
  const coordinates = values.coordinates;
  if (coordinates !== undefined && coordinates !== "planar" && coordinates !== "geographic") {
    throw new UsageError(`--coordinates must be planar or geographic, not '${coordinates}'`);
  }
  const sliverText = values["sliver-tolerance"];
  const sliverTolerance = sliverText === undefined ? undefined : Number(sliverText);
  if (sliverTolerance !== undefined && !(sliverText !== "" && Number.isFinite(sliverTolerance) && sliverTolerance >= 0 && sliverTolerance < 1)) {
    throw new UsageError(`--sliver-tolerance must be a number in [0, 1), not '${sliverText}'`);
  }
  if (shares !== undefined && (coordinates !== undefined || sliverText !== undefined)) {
    throw new UsageError("--coordinates and --sliver-tolerance apply to an area crosswalk, not to --shares");
  }
  const extensive = columnList(values.extensive);
  const intensive = columnList(values.intensive);
  const denominator = values.denominator;
  const wantsValues = values.data !== undefined || extensive.length > 0 || intensive.length > 0 || denominator !== undefined;
  if (wantsValues) {
    if (!values.data) throw new UsageError("--extensive, --intensive and --denominator need --data FILE.csv");
    if (!values["id-column"]) throw new UsageError("--data needs --id-column COL");
    if (extensive.length + intensive.length === 0) throw new UsageError("--data needs --extensive and/or --intensive columns");
    const both = extensive.find((c) => intensive.includes(c));
    if (both !== undefined) throw new UsageError(`column '${both}' is given as both --extensive and --intensive`);
    if (denominator !== undefined && intensive.length === 0) throw new UsageError("--denominator weights --intensive columns; none given");
    if (shares !== undefined && intensive.length > 0 && denominator === undefined) {
      throw new UsageError("--intensive through --shares needs --denominator COL: a crosswalk CSV has shares, not overlap areas");
    }
  }
  for (const flag of ["from", "to", "shares", "data"] as const) {
    const file = values[flag];
    if (file !== undefined) await readable(file, `--${flag}`);
  }

  const layer = async (side: "from" | "to") => {
    const file = values[side];
    if (file === undefined) return null;
    try {
      const l = { boundaries: loadBoundaries(await readFile(file, "utf8")), objectName: values[`${side}-object`]!, idProperty: values[`${side}-id`]! };
      return { ...l, ids: boundaryIds(l.boundaries, l.objectName, l.idProperty) };
    } catch (error) {
      if (error instanceof BoundaryError) throw new UsageError(`--${side} ${file}: ${error.message}`);
      throw error;
    }
  };
  const fromLayer = await layer("from");
  const toLayer = await layer("to");

  let output: Record<string, unknown>;
  let pairs: { from: string; to: string; share: number; area?: number }[];
  let sourceIds: Set<string> | null;
  let targetIds: string[];
  if (shares !== undefined) {
    const report = validateCrosswalkCsv(await readFile(shares, "utf8"), { fromIds: fromLayer?.ids, toIds: toLayer?.ids });
    if (!report.ok) {
      // Like `check`: the report says what to fix, exit 1.
      process.stdout.write(`${JSON.stringify({ ...report, links: undefined, shares }, null, 2)}\n`);
      return 1;
    }
    pairs = report.links.map(({ from, to, share }) => ({ from, to, share }));
    const linkedFrom = new Set(pairs.map((p) => p.from));
    const linkedTo = new Set(pairs.map((p) => p.to));
    sourceIds = fromLayer ? new Set(fromLayer.ids) : null;
    targetIds = toLayer ? toLayer.ids : [...linkedTo];
    output = {
      crosswalk: "csv",
      shares,
      pairs,
      unmatchedFrom: fromLayer ? fromLayer.ids.filter((id) => !linkedFrom.has(id)) : [],
      uncoveredTo: toLayer ? toLayer.ids.filter((id) => !linkedTo.has(id)) : [],
      warnings: report.warnings.map((w) => w.message),
    };
  } else {
    let result: ReturnType<typeof areaCrosswalk>;
    try {
      result = areaCrosswalk(fromLayer!, toLayer!, { coordinates: coordinates as CrosswalkCoordinates | undefined, sliverTolerance });
    } catch (error) {
      if (error instanceof CrosswalkGeometryError) throw new UsageError(error.message);
      throw error;
    }
    pairs = result.pairs;
    sourceIds = new Set(result.sources.map((r) => r.id));
    targetIds = result.targets.map((t) => t.id);
    output = { crosswalk: "area", ...result };
  }

  if (values.data) {
    const columns = [...extensive, ...intensive, ...(denominator !== undefined && !extensive.includes(denominator) && !intensive.includes(denominator) ? [denominator] : [])];
    const table = readRegionTable(await readFile(values.data, "utf8"), values.data, values["id-column"]!, columns);
    const harmonised: Record<string, Record<string, number | null>> = {};
    const missing: Record<string, MissingTarget[]> = {};
    for (const column of [...extensive, ...intensive]) {
      const rule: HarmoniseRule = extensive.includes(column)
        ? { kind: "extensive" }
        : { kind: "intensive", weighting: denominator === undefined ? { by: "area" } : { by: "denominator", values: table.get(denominator)! } };
      const h = harmonise(pairs, table.get(column)!, rule, { targets: targetIds });
      harmonised[column] = Object.fromEntries(h.values);
      // Uncovered targets are listed once, in uncoveredTo.
      missing[column] = h.missing.filter((m) => m.reason !== "uncovered");
    }
    const known = sourceIds ?? new Set(pairs.map((p) => p.from));
    output.values = harmonised;
    output.missing = missing;
    output.intensiveWeighting = intensive.length === 0 ? null : denominator === undefined ? "area" : { denominator };
    output.dataRegionsNotInSource = [...table.get(columns[0])!.keys()].filter((id) => !known.has(id));
  }
  process.stdout.write(`${JSON.stringify(output, null, 2)}\n`);
  return 0;
}

async function main(argv: string[]): Promise<number> {
  // Asking for help is not an error: usage on stdout, exit 0.
  if (argv[0] === "--help" || argv[0] === "-h" || argv[0] === "help") {
    process.stdout.write(`${USAGE}\n`);
    return 0;
  }
  let parsed: ReturnType<typeof parseArgs<{ options: typeof OPTIONS; allowPositionals: true; strict: true }>>;
  try {
    parsed = parseArgs({ args: argv, options: OPTIONS, allowPositionals: true, strict: true });
  } catch (error) {
    throw new UsageError(error instanceof Error ? error.message.split("\n")[0] : String(error));
  }
  const [command, ...rest] = parsed.positionals;
  if (rest.length > 0) throw new UsageError(`unexpected argument '${rest[0]}'`);
  const values: Record<string, string | undefined> = parsed.values;
  if (command === "check") return check(values);
  if (command === "inspect") return inspect(values);
  if (command === "preview") return preview(values);
  if (command === "crosswalk") return crosswalk(values);
  throw new UsageError(command === undefined ? USAGE : `unknown command '${command}'; ${USAGE}`);
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    if (error instanceof UsageError) {
      process.stderr.write(`intake: ${error.message}\n`);
      process.exitCode = 2;
    } else {
      // An I/O failure while streaming: not the user's arguments, not a verdict on the data.
      process.stderr.write(`intake: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exitCode = 2;
    }
  },
);
