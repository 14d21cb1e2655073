/**
 * When two runs may be compared. A change in I, a class or a local cluster
 * between two runs means something about the data only when both were
 * computed the same way on the same panel: otherwise the difference is the
 * method's, and saying "+0.024" would report a choice of weights as a
 * movement in the economy. Pure: no database, no rendering.
 *
 * The key holds the panel lineage (the panel, whichever of its versions)
 * and every stored parameter that changes a statistic, a p-value or a class:
 * weights rule, transform, island policy, permutation count, alpha, the
 * correction, whether local clusters were computed, the computation method,
 * and any parameter added later. The seed, the chosen indicators and periods,
 * the covariates and the version ids do not belong to it: the seed only redraws the same
 * test, and indicator-periods are matched one by one.
 */
import { parseWeightsSpecification } from "@/lib/spatial";

/** A run as far as comparing goes: its panel (lineage) and its stored parameters. */
export interface ComparableRun {
  readonly id: number;
  readonly panelId: number;
  readonly params: Readonly<Record<string, unknown>>;
}

/**
 * Stored parameters that do not change any number a comparison reads. The
 * covariates (`controlFor`) add a regression beside each row but leave I, its
 * p-values, classes and local clusters exactly as they are, and comparisons
 * read only those.
 */
const NOT_IN_KEY = new Set(["seed", "indicators", "periods", "panelVersionId", "boundaryVersionId", "controlFor"]);

/** Named parameters, in the order a sentence lists them, with how a reader calls them. */
const NAMED: readonly (readonly [field: string, label: string])[] = [
  ["weights", "weights"],
  ["transform", "transform"],
  ["islandPolicy", "island policy"],
  ["permutations", "permutations"],
  ["alpha", "alpha"],
  ["correction", "correction"],
  ["local", "local clusters"],
  ["sequentialExtremes", "sequential p-values"],
  ["empiricalBayes", "empirical-Bayes rates"],
  ["method", "computation"],
];

export type KeyValue = string | number | boolean;

export interface ComparabilityKey {
  readonly panelId: number;
  /** Field → value; a parameter that is absent, null or false is left out (older runs lack later options). */
  readonly fields: Readonly<Record<string, KeyValue>>;
}

/** One spelling per weights rule ("Queen ", "knn:04" → "queen", "knn:4"), so spelling never reads as a change. */
export function canonicalWeights(rule: string): string {
  try {
    const spec = parseWeightsSpecification(rule);
    switch (spec.kind) {
      case "queen":
      case "rook":
        return spec.kind;
      case "knn":
        return `knn:${spec.k}${spec.symmetrise ? ":symmetric" : ""}`;
      case "band":
        return `band:${spec.threshold ?? "auto"}`;
      case "idw":
        return `idw:${spec.threshold ?? "auto"}:${spec.power}`;
    }
  } catch {
    // A stored rule the engine no longer parses still compares by its own text.
  }
  return rule.trim().toLowerCase();
}

function keyValue(field: string, value: unknown): KeyValue | null {
  if (value === undefined || value === null || value === false) return null;
  if (field === "weights" && typeof value === "string") return canonicalWeights(value);
  if (typeof value === "string" || typeof value === "number" || typeof value === "boolean") return value;
  // Structured parameters (the empirical-Bayes rate list) compare by their JSON text.
  return JSON.stringify(value);
}

export function comparabilityKey(run: ComparableRun): ComparabilityKey {
  const fields: Record<string, KeyValue> = {};
  for (const [field, raw] of Object.entries(run.params)) {
    if (NOT_IN_KEY.has(field)) continue;
    const value = keyValue(field, raw);
    if (value !== null) fields[field] = value;
  }
  // "local: false" is an explicit choice, not an absent option: runs without local clusters differ from runs with them.
  if (run.params.local === false) fields.local = false;
  return { panelId: run.panelId, fields };
}

/** A stable text of the key: equal texts, comparable runs. */
export function comparabilityText(key: ComparabilityKey): string {
  const entries = Object.keys(key.fields)
    .sort()
    .map((field) => [field, key.fields[field]]);
  return JSON.stringify([key.panelId, entries]);
}

export function sameLineage(a: ComparableRun, b: ComparableRun): boolean {
  return a.panelId === b.panelId;
}

export function comparable(a: ComparableRun, b: ComparableRun): boolean {
  return comparabilityText(comparabilityKey(a)) === comparabilityText(comparabilityKey(b));
}

export interface MethodDifference {
  readonly field: string;
  readonly label: string;
  readonly before: KeyValue | null;
  readonly after: KeyValue | null;
}

function labelOf(field: string): string {
  return NAMED.find(([f]) => f === field)?.[1] ?? field;
}

/** How `after` was computed differently from `before` (same lineage assumed), named fields first. */
export function methodDifferences(before: ComparableRun, after: ComparableRun): MethodDifference[] {
  const a = comparabilityKey(before).fields;
  const b = comparabilityKey(after).fields;
  const named = NAMED.map(([f]) => f);
  const others = [...new Set([...Object.keys(a), ...Object.keys(b)])].filter((f) => !named.includes(f)).sort();
  const out: MethodDifference[] = [];
  for (const field of [...named, ...others]) {
    const x = a[field] ?? null;
    const y = b[field] ?? null;
    if (x !== y) out.push({ field, label: labelOf(field), before: x, after: y });
  }
  return out;
}

function shown(field: string, value: KeyValue | null): string {
  if (field === "local") return value === false ? "off" : "on";
  // Stored only when on, as the number of extremes h after which a region stops (Besag & Clifford).
  if (field === "sequentialExtremes") return value === null ? "off" : `on (h = ${value})`;
  if (value === null) return "not set";
  if (value === true) return "on";
  return String(value);
}

/** "weights changed from queen to rook; no comparison" (several changes joined with "and"). */
export function describeMethodChange(differences: readonly MethodDifference[]): string {
  if (differences.length === 0) return "the method is the same";
  const parts = differences.map((d) => `${d.label} changed from ${shown(d.field, d.before)} to ${shown(d.field, d.after)}`);
  const joined = parts.length === 1 ? parts[0] : `${parts.slice(0, -1).join(", ")} and ${parts[parts.length - 1]}`;
  return `${joined}; no comparison`;
}

/** What a run's results may be compared with. */
export type Baseline<R extends ComparableRun> =
  /** No earlier run of this panel lineage among the candidates. */
  | { readonly kind: "none" }
  /** The newest candidate computed the same way. */
  | { readonly kind: "comparable"; readonly run: R }
  /** Only runs computed differently: `run` is the newest of them; nothing is compared. */
  | { readonly kind: "method-changed"; readonly run: R; readonly differences: readonly MethodDifference[]; readonly sentence: string };

/**
 * The baseline of `current` among `candidates` (newest first): the newest
 * candidate of the same lineage with the same key; failing that, the newest
 * of the same lineage reported as a change of method; failing that, none.
 * Candidates of other panels are never baselines. A candidate that is the
 * current run itself counts (a digest that covered this run already).
 */
export function selectBaseline<R extends ComparableRun>(current: ComparableRun, candidates: readonly R[]): Baseline<R> {
  const lineage = candidates.filter((c) => sameLineage(c, current));
  const same = lineage.find((c) => comparable(c, current));
  if (same) return { kind: "comparable", run: same };
  const newest = lineage[0];
  if (!newest) return { kind: "none" };
  const differences = methodDifferences(newest, current);
  return { kind: "method-changed", run: newest, differences, sentence: describeMethodChange(differences) };
}

/** The method of a run in one line ("weights queen, transform row-standardised, island policy exclude, 999 permutations, …"). */
export function describeMethod(run: ComparableRun): string {
  const fields = comparabilityKey(run).fields;
  const named = NAMED.map(([f]) => f);
  const parts: string[] = [];
  for (const field of [...named, ...Object.keys(fields).filter((f) => !named.includes(f)).sort()]) {
    const value = fields[field];
    if (value === undefined && field !== "local" && field !== "sequentialExtremes") continue;
    if (field === "permutations") parts.push(`${value} permutations`);
    else parts.push(`${labelOf(field)} ${shown(field, value ?? null)}`);
  }
  return parts.join(", ");
}
