import { createHash } from "node:crypto";
import type { SessionUser } from "@/lib/auth/session";

// A tiny invented map: a 3 × 3 grid of square districts "G1".."G9" (planar
// kilometres), as GeoJSON, and panels over it.

export function gridGeoJson(size = 3, prefix = "G"): string {
  const features = [];
  for (let row = 0; row < size; row++) {
    for (let col = 0; col < size; col++) {
      const x = col * 10 + 500;
      const y = row * 10 + 500;
      features.push({
        type: "Feature",
        properties: { code: `${prefix}${row * size + col + 1}`, name: `Square ${row * size + col + 1}` },
        geometry: { type: "Polygon", coordinates: [[[x, y], [x + 10, y], [x + 10, y + 10], [x, y + 10], [x, y]]] },
      });
    }
  }
  return JSON.stringify({ type: "FeatureCollection", features });
}

/** A long panel over the grid: indicators × years, value = f(region, year, indicator) + `shift` for `shiftRegion`. */
export function longPanel(options: { years?: number[]; indicators?: string[]; size?: number; shift?: { region: string; year: number; by: number } } = {}): string {
  const years = options.years ?? [2019, 2020, 2021];
  const indicators = options.indicators ?? ["jobless_rate", "income"];
  const n = (options.size ?? 3) ** 2;
  const lines = ["region,period,indicator,value"];
  for (const indicator of indicators) {
    for (const year of years) {
      for (let i = 1; i <= n; i++) {
        let value = Math.round((i * 1.5 + (year - 2000) * 0.25 + indicator.length) * 100) / 100;
        if (options.shift && options.shift.region === `G${i}` && options.shift.year === year) value += options.shift.by;
        lines.push(`G${i},${year},${indicator},${value}`);
      }
    }
  }
  return `${lines.join("\n")}\n`;
}

export function sha256(bytes: Buffer | string): string {
  return createHash("sha256").update(bytes).digest("hex");
}

export function ctx(params: Record<string, string>) {
  return { params: Promise.resolve(params) };
}

export function jsonRequest(method: string, body?: unknown, url = "http://tessera.test/api"): Request {
  return new Request(url, {
    method,
    headers: { "content-type": "application/json" },
    body: body === undefined ? undefined : JSON.stringify(body),
  });
}

/** A GET with the given search parameters, for route handlers called in process. */
export function getRequest(query: string): Request {
  return new Request(`http://tessera.test/api?${query}`);
}

export function asSession(user: { id: number; email: string; name: string }): SessionUser {
  return { id: user.id, email: user.email, name: user.name };
}
