import { createHash, randomBytes } from "node:crypto";
import { readFileSync } from "node:fs";
import path from "node:path";
import { QueryTypes } from "sequelize";
import type { GeometryCollection, Topology } from "topojson-specification";
import { db } from "@/lib/db";
import { putObject } from "@/lib/storage/s3";

// A Veldmark panel (the invented demo data of seeders/data/veldmark) loaded
// straight into the intake tables, so run tests do not depend on the intake
// screens. Each call makes a new boundary set, panel and version.

const DATA = path.join(process.cwd(), "seeders", "data", "veldmark");

export type VersionState = "uploaded" | "validated" | "rejected" | "published" | "archived";

export interface LoadedPanel {
  panelVersionId: number;
  boundaryVersionId: number;
  indicators: string[];
  periods: string[];
  regions: string[];
}

/** The Veldmark panel's declared rate (its file's `# rate:` line). */
export const RATE = { indicator: "business_closures_per_1000", events: "business_closures", population: "working_age_population", multiplier: 1000 } as const;

function tag(): string {
  return `${Date.now().toString(36)}-${randomBytes(3).toString("hex")}`;
}

/**
 * Loads Veldmark into a workspace as a panel version in `state`, optionally
 * only some indicators/periods, and with `mutate` applied to each value
 * (e.g. to make an indicator constant). Returns the ids.
 */
export async function loadVeldmarkPanel(
  workspaceId: number,
  options: {
    state?: VersionState;
    indicators?: readonly string[];
    periods?: readonly string[];
    mutate?: (indicator: string, period: string, region: string, value: number | null) => number | null;
    /**
     * Also load the declared rate the file's `# rate:` line names (business
     * closures per 1,000 working-age residents), derived from its two counts
     * as intake derives it, and record the declaration on its indicator.
     */
    withRate?: boolean;
    /** Renames regions (boundaries and values alike), e.g. to give one a hostile code. */
    regionCode?: (code: string) => string;
  } = {},
): Promise<LoadedPanel> {
  const sequelize = db();
  const rename = options.regionCode ?? ((code: string) => code);
  const fileText = readFileSync(path.join(DATA, "veldmark.topojson"), "utf8");
  const topology = JSON.parse(fileText) as Topology;
  const districts = topology.objects.districts as GeometryCollection<{ code: string; name: string }>;
  if (options.regionCode) for (const g of districts.geometries) if (g.properties && "code" in g.properties) g.properties.code = rename(g.properties.code);
  const topologyText = options.regionCode ? JSON.stringify(topology) : fileText;
  const indicatorMeta = JSON.parse(readFileSync(path.join(DATA, "indicators.json"), "utf8")) as {
    code: string;
    label: string;
    unit: string;
    description: string;
    source: string;
    higherIsBetter: boolean;
  }[];
  // The file opens with its `# rate:` line, then the header.
  const csv = readFileSync(path.join(DATA, "veldmark-panel.csv"), "utf8").trim().split(/\r?\n/).filter((line) => !line.startsWith("#")).slice(1);
  const wantIndicators = options.indicators ? new Set(options.indicators) : null;
  const wantPeriods = options.periods ? new Set(options.periods) : null;
  const rows: { region: string; period: string; indicator: string; value: number | null }[] = [];
  for (const line of csv) {
    const [file, period, indicator, raw] = line.split(",");
    const region = rename(file);
    if (wantIndicators && !wantIndicators.has(indicator)) continue;
    if (wantPeriods && !wantPeriods.has(period)) continue;
    const value = raw === "" ? null : Number(raw);
    rows.push({ region, period, indicator, value: options.mutate ? options.mutate(indicator, period, region, value) : value });
  }
  if (options.withRate) {
    const key = (r: { region: string; period: string }) => `${r.region}|${r.period}`;
    const population = new Map(rows.filter((r) => r.indicator === RATE.population).map((r) => [key(r), r.value]));
    for (const r of rows.filter((x) => x.indicator === RATE.events)) {
      const p = population.get(key(r));
      rows.push({ region: r.region, period: r.period, indicator: RATE.indicator, value: r.value === null || p === null || p === undefined ? null : (RATE.multiplier * r.value) / p });
    }
  }
  const state = options.state ?? "published";
  const t = tag();
  const sha = createHash("sha256").update(topologyText).digest("hex");
  const s3Key = `fixtures/runs/${t}/veldmark.topojson`;
  await putObject(s3Key, topologyText, "application/json");

  return sequelize.transaction(async (transaction) => {
    const q = <T extends object>(sql: string, bind: unknown[]) => sequelize.query<T>(sql, { bind, type: QueryTypes.SELECT, transaction });
    for (const m of indicatorMeta) {
      await sequelize.query(
        `INSERT INTO indicators (workspace_id, code, label, unit, description, source, higher_is_better, created_at, updated_at)
         VALUES ($1,$2,$3,$4,$5,$6,$7,now(),now()) ON CONFLICT (workspace_id, code) DO NOTHING`,
        { bind: [workspaceId, m.code, m.label, m.unit, m.description, m.source, m.higherIsBetter], transaction },
      );
    }
    if (options.withRate) {
      await sequelize.query(
        `UPDATE indicators SET rate_events_code = $2, rate_population_code = $3, rate_multiplier = $4 WHERE workspace_id = $1 AND code = $5`,
        { bind: [workspaceId, RATE.events, RATE.population, RATE.multiplier, RATE.indicator], transaction },
      );
    }
    const [set] = await q<{ id: number }>(
      "INSERT INTO boundary_sets (workspace_id, name, created_at, updated_at) VALUES ($1, $2, now(), now()) RETURNING id",
      [workspaceId, `Veldmark districts ${t}`],
    );
    const [boundary] = await q<{ id: number }>(
      `INSERT INTO boundary_versions (boundary_set_id, version, state, s3_key, file_name, byte_size, sha256, format, object_name, id_property,
                                      name_property, region_count, validated_at, published_at, created_at, updated_at)
       VALUES ($1, 1, 'published', $2, 'veldmark.topojson', $3, $4, 'topojson', 'districts', 'code', 'name', $5, now(), now(), now(), now()) RETURNING id`,
      [set.id, s3Key, Buffer.byteLength(topologyText), sha, districts.geometries.length],
    );
    const props = (g: (typeof districts.geometries)[number]) => (g.properties ?? {}) as { code?: string; name?: string };
    const codes = districts.geometries.map((g) => props(g).code ?? "");
    const names = districts.geometries.map((g) => props(g).name ?? null);
    await sequelize.query(
      "INSERT INTO regions (boundary_version_id, code, name, attributes) SELECT $1, c, n, '{}'::jsonb FROM unnest($2::text[], $3::text[]) WITH ORDINALITY AS u(c, n, o) ORDER BY o",
      { bind: [boundary.id, codes, names], transaction },
    );
    const [panel] = await q<{ id: number }>(
      "INSERT INTO panels (workspace_id, name, boundary_set_id, created_at, updated_at) VALUES ($1, $2, $3, now(), now()) RETURNING id",
      [workspaceId, `Veldmark indicators ${t}`, set.id],
    );
    const published = state === "published" || state === "archived";
    const [version] = await q<{ id: number }>(
      `INSERT INTO panel_versions (panel_id, version, state, s3_key, file_name, byte_size, sha256, layout, decimal_separator, mapping,
                                   boundary_version_id, row_count, validated_at, published_at, archived_at, created_at, updated_at)
       VALUES ($1, 1, $2, $3, 'veldmark-panel.csv', 1, $4, 'long', '.', '{}'::jsonb, $5, $6, now(), $7, $8, now(), now()) RETURNING id`,
      [panel.id, state, `fixtures/runs/${t}/panel.csv`, sha, boundary.id, rows.length, published ? new Date() : null, state === "archived" ? new Date() : null],
    );
    await sequelize.query(
      `INSERT INTO observations (panel_version_id, indicator_code, period_key, region_code, value)
       SELECT $1, i, p, r, v FROM unnest($2::text[], $3::text[], $4::text[], $5::float8[]) AS u(i, p, r, v)`,
      {
        bind: [version.id, rows.map((r) => r.indicator), rows.map((r) => r.period), rows.map((r) => r.region), rows.map((r) => r.value)],
        transaction,
      },
    );
    return {
      panelVersionId: version.id,
      boundaryVersionId: boundary.id,
      indicators: [...new Set(rows.map((r) => r.indicator))].sort(),
      periods: [...new Set(rows.map((r) => r.period))].sort(),
      regions: codes,
    };
  });
}
