import { existsSync, readFileSync, readdirSync, statSync } from "node:fs";
import path from "node:path";
import ts from "typescript";

// The import graph of the application's own sources and the rules it must keep
// (docs in DEVELOPERS.md, "Layers"). Pure apart from reading files, so the rules
// are tested on small made-up graphs as well as on the real one.

export const ROOT = path.join(__dirname, "..", "..", "..");

/** Folders and files whose imports are checked (tests, migrations and seeders are edges of their own). */
const SOURCES = ["app", "components", "lib", "models", "worker", "scripts", "proxy.ts", "instrumentation-client.ts"];
const EXTENSIONS = [".ts", ".tsx", ".mts", ".mjs", ".js"];

/**
 * Layers from the bottom (0) up. An import may go sideways (same layer) or
 * down, never up. Domains may use each other, but never in a loop (see
 * {@link cycles} over {@link folderGraph}). lib/auth is identity and access,
 * which every domain and the route wrapper check; lib/http/route.ts is the
 * route wrapper the domains' route handlers share, while lib/http's error
 * classes and parsers are pure and sit with the shared infrastructure.
 */
export const LAYERS: readonly { readonly name: string; readonly rank: number; readonly matches: (file: string) => boolean }[] = [
  { name: "models", rank: 0, matches: (f) => f.startsWith("models/") },
  {
    name: "shared infrastructure",
    rank: 1,
    matches: (f) =>
      /^lib\/(config|storage|security|mail|jobs|client)\//.test(f) ||
      ["lib/db.ts", "lib/models.ts", "lib/service-unavailable.ts"].includes(f) ||
      // The HTTP error classes and parameter parsers are pure: every layer may throw and parse.
      (f.startsWith("lib/http/") && f !== "lib/http/route.ts"),
  },
  { name: "identity and access (lib/auth)", rank: 2, matches: (f) => f.startsWith("lib/auth/") },
  { name: "HTTP core (lib/http/route.ts)", rank: 3, matches: (f) => f === "lib/http/route.ts" },
  { name: "lib domains", rank: 4, matches: (f) => f.startsWith("lib/") },
  { name: "components", rank: 5, matches: (f) => f.startsWith("components/") },
  { name: "entry points (app, worker, scripts, proxy)", rank: 6, matches: () => true },
];

export function layerOf(file: string): { name: string; rank: number } {
  const layer = LAYERS.find((l) => l.matches(file));
  if (!layer) throw new Error(`no layer for ${file}`);
  return layer;
}

function walk(relative: string, out: string[]): void {
  const full = path.join(ROOT, relative);
  if (!existsSync(full)) return;
  if (statSync(full).isDirectory()) {
    for (const entry of readdirSync(full)) if (entry !== "node_modules") walk(path.posix.join(relative, entry), out);
  } else if (EXTENSIONS.some((e) => relative.endsWith(e)) && !relative.endsWith(".d.ts")) {
    out.push(relative);
  }
}

export function sourceFiles(): string[] {
  const out: string[] = [];
  for (const source of SOURCES) walk(source, out);
  return out.sort();
}

/** Resolves a specifier to a repository file, or null for packages and Node built-ins. */
export function resolveSpecifier(from: string, specifier: string): string | null {
  let base: string;
  if (specifier.startsWith("@/")) base = specifier.slice(2);
  else if (specifier.startsWith(".")) base = path.posix.normalize(path.posix.join(path.posix.dirname(from), specifier));
  else return null;
  const candidates = [base, ...EXTENSIONS.map((e) => base + e), ...EXTENSIONS.map((e) => `${base}/index${e}`)];
  // An ESM-style "./x.js" that names a TypeScript file.
  if (/\.m?js$/.test(base)) candidates.push(base.replace(/\.m?js$/, ".ts"), base.replace(/\.m?js$/, ".tsx"));
  for (const candidate of candidates) {
    const full = path.join(ROOT, candidate);
    if (existsSync(full) && statSync(full).isFile()) return candidate;
  }
  throw new Error(`${from}: cannot resolve "${specifier}"`);
}

/** Every import of every source file, type-only and dynamic imports included (a type-only loop is still a loop). */
export function importGraph(files: readonly string[] = sourceFiles()): Map<string, string[]> {
  const graph = new Map<string, string[]>();
  for (const file of files) {
    const text = readFileSync(path.join(ROOT, file), "utf8");
    const info = ts.preProcessFile(text, true, true);
    const targets = info.importedFiles.map((i) => resolveSpecifier(file, i.fileName)).filter((t): t is string => t !== null && t.endsWith(".json") === false);
    graph.set(file, [...new Set(targets)]);
  }
  return graph;
}

/** Imports that run up the layers, as "from → to (layer → layer)". */
export function upwardImports(graph: ReadonlyMap<string, readonly string[]>): string[] {
  const found: string[] = [];
  for (const [from, targets] of graph) {
    const a = layerOf(from);
    for (const to of targets) {
      const b = layerOf(to);
      if (b.rank > a.rank) found.push(`${from} → ${to} (${a.name} imports ${b.name})`);
    }
  }
  return found.sort();
}

/** The folder a file counts under for loops between parts of lib/ (lib/runs/x.ts → lib/runs). */
export function folderOf(file: string): string {
  // The route wrapper sits above lib/auth while the rest of lib/http sits below it.
  if (file === "lib/http/route.ts") return file;
  const parts = file.split("/");
  return parts.length > 2 ? parts.slice(0, 2).join("/") : file;
}

/** Strongly connected components with more than one member (Tarjan), each sorted. */
export function cycles(graph: ReadonlyMap<string, readonly string[]>): string[][] {
  let index = 0;
  const indices = new Map<string, number>();
  const low = new Map<string, number>();
  const stack: string[] = [];
  const onStack = new Set<string>();
  const out: string[][] = [];
  const nodes = new Set<string>([...graph.keys(), ...[...graph.values()].flat()]);
  const visit = (v: string) => {
    indices.set(v, index);
    low.set(v, index);
    index++;
    stack.push(v);
    onStack.add(v);
    for (const w of graph.get(v) ?? []) {
      if (!indices.has(w)) {
        visit(w);
        low.set(v, Math.min(low.get(v)!, low.get(w)!));
      } else if (onStack.has(w)) {
        low.set(v, Math.min(low.get(v)!, indices.get(w)!));
      }
    }
    if (low.get(v) === indices.get(v)) {
      const component: string[] = [];
      let w: string;
      do {
        w = stack.pop()!;
        onStack.delete(w);
        component.push(w);
      } while (w !== v);
      if (component.length > 1 || (graph.get(v) ?? []).includes(v)) out.push(component.sort());
    }
  };
  for (const v of [...nodes].sort()) if (!indices.has(v)) visit(v);
  return out;
}

/** The graph between lib/ folders (and models/), self-edges dropped. */
export function folderGraph(graph: ReadonlyMap<string, readonly string[]>): Map<string, string[]> {
  const folders = new Map<string, Set<string>>();
  for (const [from, targets] of graph) {
    if (!from.startsWith("lib/")) continue;
    const a = folderOf(from);
    const set = folders.get(a) ?? new Set<string>();
    for (const to of targets) {
      if (!to.startsWith("lib/")) continue;
      const b = folderOf(to);
      if (b !== a) set.add(b);
    }
    folders.set(a, set);
  }
  return new Map([...folders].map(([k, v]) => [k, [...v].sort()]));
}
