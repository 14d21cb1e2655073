import fs from "node:fs";
import path from "node:path";
import { buildReform, continuationPanel, REFORM_YEAR, SPLIT_WEST_SHARE } from "@/scripts/demo/veldmark/reform";

// The demo's figures observed on the reformed districts from 2019 (scripts/demo/seed-demo-reform.ts
// seeds them as the continuation of the harmonised demo panel), checked against the demo panel file
// by hand-written sums and population-weighted means.

const DATA = path.join(__dirname, "..", "..", "..", "seeders", "data", "veldmark");
const panel = fs.readFileSync(path.join(DATA, "veldmark-panel.csv"), "utf8");
const reform = buildReform(JSON.parse(fs.readFileSync(path.join(DATA, "veldmark.topojson"), "utf8")));
const csv = continuationPanel(panel, reform);

function cells(text: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const line of text.split("\n")) {
    const [region, period, indicator, value] = line.split(",");
    if (/^\d{4}$/.test(period ?? "")) out.set(`${region}|${period}|${indicator}`, value);
  }
  return out;
}
const before = cells(panel);
const after = cells(csv);
const num = (map: Map<string, string>, key: string) => Number(map.get(key));

it("keeps the rate line and covers exactly the reformed districts from the reform year on", () => {
  expect(csv.split("\n")[0]).toMatch(/^# rate: business_closures_per_1000 = /);
  const periods = new Set([...after.keys()].map((k) => k.split("|")[1]));
  expect([...periods].sort()).toEqual(["2019", "2020", "2021", "2022", "2023", "2024"]);
  expect(REFORM_YEAR).toBe(2019);
  const regions = new Set([...after.keys()].map((k) => k.split("|")[0]));
  const old = new Set([...before.keys()].map((k) => k.split("|")[0]));
  // Three merges (−3) and one split (+1).
  expect(regions.size).toBe(old.size - 2);
  expect(regions.has(reform.split.from)).toBe(false);
  for (const m of reform.merged) for (const from of m.from) expect(regions.has(from)).toBe(false);
  // Unchanged districts keep their figures as written.
  expect(after.get("VM-001|2021|unemployment_rate")).toBe(before.get("VM-001|2021|unemployment_rate"));
  expect(continuationPanel(panel, reform)).toBe(csv);
});

it("sums counts and weights the other figures by working-age population for merged districts", () => {
  const m = reform.merged[0];
  const [a, b] = m.from;
  const y = "2022";
  expect(num(after, `${m.code}|${y}|business_closures`)).toBe(num(before, `${a}|${y}|business_closures`) + num(before, `${b}|${y}|business_closures`));
  const pa = num(before, `${a}|${y}|working_age_population`);
  const pb = num(before, `${b}|${y}|working_age_population`);
  expect(num(after, `${m.code}|${y}|working_age_population`)).toBe(pa + pb);
  const mean = (pa * num(before, `${a}|${y}|unemployment_rate`) + pb * num(before, `${b}|${y}|unemployment_rate`)) / (pa + pb);
  expect(Math.abs(num(after, `${m.code}|${y}|unemployment_rate`) - mean)).toBeLessThanOrEqual(0.05 + 1e-9);
});

it("splits the split district's residents and keeps its population-weighted figures", () => {
  const [west, east] = reform.split.to;
  const from = reform.split.from;
  for (const y of ["2019", "2024"]) {
    const p = num(before, `${from}|${y}|working_age_population`);
    const pw = num(after, `${west}|${y}|working_age_population`);
    const pe = num(after, `${east}|${y}|working_age_population`);
    expect(pw + pe).toBe(p);
    expect(Math.abs(pw - p * SPLIT_WEST_SHARE)).toBeLessThanOrEqual(0.5);
    expect(num(after, `${west}|${y}|business_closures`) + num(after, `${east}|${y}|business_closures`)).toBe(num(before, `${from}|${y}|business_closures`));
    const w = num(after, `${west}|${y}|unemployment_rate`);
    const e = num(after, `${east}|${y}|unemployment_rate`);
    // Rounded to one decimal each: the weighted mean is within 0.05 of the old district's figure.
    expect(Math.abs(SPLIT_WEST_SHARE * w + (1 - SPLIT_WEST_SHARE) * e - num(before, `${from}|${y}|unemployment_rate`))).toBeLessThanOrEqual(0.05 + 1e-9);
  }
  // The halves are not copies of the old district: some figure differs between them.
  const differing = ["2019", "2020", "2021", "2022", "2023", "2024"].filter((y) => after.get(`${west}|${y}|output_per_head`) !== after.get(`${east}|${y}|output_per_head`));
  expect(differing.length).toBeGreaterThan(0);
});
