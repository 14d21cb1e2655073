#!/usr/bin/env node
// Convert tests/fixtures/nc/nc.geojson (written by spdep-reference.R from sf's nc.shp)
// into tests/fixtures/nc/nc.topojson with topojson-server, WITHOUT quantization, so
// every vertex keeps its exact double value and shared boundaries stay shared arcs.
//
// Usage (from the repository root): node scripts/reference/nc-to-topojson.mjs [in] [out]
import { readFileSync, writeFileSync, statSync } from "node:fs";
import { topology } from "topojson-server";

const input = process.argv[2] ?? "tests/fixtures/nc/nc.geojson";
const output = process.argv[3] ?? "tests/fixtures/nc/nc.topojson";
const ID_PROPERTY = "FIPSNO";

const geojson = JSON.parse(readFileSync(input, "utf8"));
if (geojson.type !== "FeatureCollection" || !Array.isArray(geojson.features)) {
  throw new Error(`${input} is not a GeoJSON FeatureCollection`);
}
const seen = new Set();
for (const feature of geojson.features) {
  const id = feature.properties?.[ID_PROPERTY];
  if (typeof id !== "number" || seen.has(id)) {
    throw new Error(`feature without a unique numeric ${ID_PROPERTY}: ${JSON.stringify(feature.properties)}`);
  }
  seen.add(id);
  feature.id = id;
}

// No second argument: topojson-server keeps the coordinates as they are (no quantization).
const topo = topology({ nc: geojson });
if (topo.transform) throw new Error("unexpected quantization transform");
writeFileSync(output, JSON.stringify(topo));

const bytes = statSync(output).size;
console.log(
  `wrote ${output}: ${geojson.features.length} geometries, ${topo.arcs.length} arcs, ${bytes} bytes (id property ${ID_PROPERTY})`,
);
if (bytes > 5 * 1024 * 1024) {
  throw new Error(`${output} is larger than 5 MB`);
}
