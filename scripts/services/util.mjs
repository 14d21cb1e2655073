// Shared helpers for scripts/start.mjs and scripts/test.mjs.
// Only Node built-ins here: these run before `npm ci` may have happened.
import { spawn } from "node:child_process";
import { createHash } from "node:crypto";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
export const HOST = "127.0.0.1";

const useColour = process.stdout.isTTY && !process.env.NO_COLOR;
const paint = (code, s) => (useColour ? `\x1b[${code}m${s}\x1b[0m` : s);
export const bold = (s) => paint("1", s);
export const dim = (s) => paint("2", s);
export const red = (s) => paint("31", s);
export const green = (s) => paint("32", s);

export function log(tag, message) {
  process.stdout.write(`${dim(`[${tag}]`)} ${message}\n`);
}

/** An error whose message is meant for the person at the terminal, shown without a stack. */
export class UserFacingError extends Error {
  constructor(message) {
    super(message);
    this.name = "UserFacingError";
  }
}

export function sleep(ms) {
  return new Promise((resolve) => setTimeout(resolve, ms));
}

// ---------------------------------------------------------------- .env files

/** Parses KEY=VALUE lines (comments, blank lines, optional single/double quotes). */
export function parseDotEnv(text) {
  const out = {};
  for (const rawLine of text.split(/\r?\n/)) {
    const line = rawLine.trim();
    if (!line || line.startsWith("#")) continue;
    const m = /^(?:export\s+)?([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(.*)$/.exec(line);
    if (!m) continue;
    let value = m[2];
    if ((value.startsWith('"') && value.endsWith('"')) || (value.startsWith("'") && value.endsWith("'"))) {
      value = value.slice(1, -1);
    } else {
      const hash = value.indexOf(" #");
      if (hash >= 0) value = value.slice(0, hash).trim();
    }
    out[m[1]] = value;
  }
  return out;
}

export function readDotEnv(file) {
  return fs.existsSync(file) ? parseDotEnv(fs.readFileSync(file, "utf8")) : {};
}

// ---------------------------------------------------------------- ports

/** True when nothing listens on host:port (we can bind it ourselves). */
export function isPortFree(port, host = HOST) {
  return new Promise((resolve) => {
    const server = net.createServer();
    server.unref();
    server.once("error", () => resolve(false));
    server.listen({ port, host, exclusive: true }, () => server.close(() => resolve(true)));
  });
}

/**
 * Throws a UserFacingError naming every busy port and the variable that moves it.
 * @param {{port:number, variable:string, service:string, related?:string}[]} wanted related: a variable that repeats the port
 * @param {string} where where to set the variable, e.g. "in .env"; "{var}" is replaced by its name
 */
export async function assertPortsFree(wanted, where) {
  const busy = [];
  for (const w of wanted) {
    if (!Number.isInteger(w.port) || w.port <= 0 || w.port > 65535) {
      throw new UserFacingError(`${w.variable}=${w.port} is not a valid port number (set ${w.variable} ${where.replace(/\{var\}/g, w.variable)}).`);
    }
    if (!(await isPortFree(w.port))) busy.push(w);
  }
  if (busy.length) {
    const lines = busy.map(
      (w) => `  port ${w.port} on ${HOST} (${w.service}) is already in use — stop whatever listens there, or set ${w.variable}${w.related ? ` (and the port in ${w.related})` : ""} to a free port ${where.replace(/\{var\}/g, w.variable)}.`,
    );
    throw new UserFacingError(`Cannot start: ${busy.length === 1 ? "a port is" : "ports are"} busy.\n${lines.join("\n")}`);
  }
}

/** Resolves once a TCP connection to host:port succeeds; rejects after timeoutMs or when `alive()` turns false. */
export async function waitForPort(port, { host = HOST, timeoutMs = 30_000, what = `port ${port}`, alive } = {}) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const ok = await new Promise((resolve) => {
      const socket = net.connect({ port, host });
      socket.once("connect", () => {
        socket.destroy();
        resolve(true);
      });
      socket.once("error", () => resolve(false));
    });
    if (ok) return;
    if (alive && !alive()) throw new UserFacingError(`${what} exited before it listened on ${host}:${port}.`);
    if (Date.now() > deadline) throw new UserFacingError(`${what} did not listen on ${host}:${port} within ${Math.round(timeoutMs / 1000)} s.`);
    await sleep(200);
  }
}

/** Polls an HTTP URL until it answers (any status below 500). */
export async function waitForHttp(url, { timeoutMs = 60_000, what = url, alive } = {}) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    try {
      const res = await fetch(url, { redirect: "manual", signal: AbortSignal.timeout(5_000) });
      if (res.status < 500) return res.status;
    } catch {
      // not up yet
    }
    if (alive && !alive()) throw new UserFacingError(`${what} exited before it answered at ${url}.`);
    if (Date.now() > deadline) throw new UserFacingError(`${what} did not answer at ${url} within ${Math.round(timeoutMs / 1000)} s.`);
    await sleep(300);
  }
}

// ---------------------------------------------------------------- commands

/**
 * Runs a command to completion. Resolves with {stdout, stderr}; rejects with an
 * error naming the command, its exit code and the tail of its output.
 */
export function run(cmd, args, { cwd = ROOT, env = process.env, input, inherit = false, quiet = false } = {}) {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { cwd, env, stdio: [input === undefined ? "ignore" : "pipe", inherit ? "inherit" : "pipe", inherit ? "inherit" : "pipe"] });
    let stdout = "";
    let stderr = "";
    child.stdout?.on("data", (d) => (stdout += d));
    child.stderr?.on("data", (d) => (stderr += d));
    if (input !== undefined) {
      child.stdin.end(input);
    }
    child.once("error", (err) => reject(new UserFacingError(`Could not run ${cmd}: ${err.message}`)));
    child.once("close", (code, signal) => {
      if (code === 0) return resolve({ stdout, stderr });
      const tail = (stderr || stdout).trim().split("\n").slice(-15).join("\n");
      const err = new UserFacingError(`${[cmd, ...args].join(" ")} failed (${signal ?? `exit ${code}`})${tail && !quiet ? `:\n${tail}` : ""}`);
      err.code = code;
      err.stdout = stdout;
      err.stderr = stderr;
      reject(err);
    });
  });
}

const DPKG_BUSY = /Could not get lock|dpkg frontend lock|Unable to acquire the dpkg|is another process using it|dpkg was interrupted/i;

/** apt-get update + install, retrying while another apt/dpkg holds the lock. */
export async function aptInstall(packages, tag) {
  if (typeof process.getuid === "function" && process.getuid() !== 0) {
    throw new UserFacingError(`Debian package(s) ${packages.join(", ")} are missing and this is not root: install them with \`sudo apt-get install -y ${packages.join(" ")}\` and start again.`);
  }
  const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
  const deadline = Date.now() + 15 * 60_000;
  const withRetry = async (args) => {
    for (let attempt = 1; ; attempt++) {
      try {
        return await run("apt-get", args, { env });
      } catch (err) {
        const text = `${err.stderr ?? ""}${err.stdout ?? ""}${err.message}`;
        if (DPKG_BUSY.test(text) && Date.now() < deadline) {
          if (attempt === 1 || attempt % 6 === 0) log(tag, `apt/dpkg is busy (another installation is running); waiting…`);
          await sleep(5_000);
          continue;
        }
        throw err;
      }
    }
  };
  log(tag, `installing Debian package(s) ${packages.join(", ")} (apt-get)…`);
  await withRetry(["update", "-qq"]);
  await withRetry(["install", "-y", "-qq", "--no-install-recommends", ...packages]);
}

// ---------------------------------------------------------------- dependencies

/** Runs `npm ci` when node_modules is missing or older than package-lock.json. */
export async function ensureNodeModules() {
  const lock = path.join(ROOT, "package-lock.json");
  const marker = path.join(ROOT, "node_modules", ".package-lock.json");
  let reason = null;
  if (!fs.existsSync(path.join(ROOT, "node_modules"))) reason = "node_modules is missing";
  else if (!fs.existsSync(marker)) reason = "node_modules was not installed by npm";
  else if (fs.statSync(marker).mtimeMs + 1000 < fs.statSync(lock).mtimeMs) reason = "package-lock.json is newer than node_modules";
  if (!reason) return false;
  log("deps", `${reason}: running npm ci (about 1–2 minutes)…`);
  const started = Date.now();
  await run("npm", ["ci", "--no-audit", "--no-fund"], { inherit: true, env: { ...process.env, NEXT_TELEMETRY_DISABLED: "1" } });
  log("deps", `npm ci done in ${Math.round((Date.now() - started) / 1000)} s`);
  return true;
}

// ---------------------------------------------------------------- next build

const BUILD_INPUT_DIRS = ["app", "components", "lib", "models", "public", "config"];
const BUILD_INPUT_FILES = /\.(ts|tsx|js|jsx|mjs|cjs|json|css)$/;
const BUILD_IGNORED_TOP = new Set(["next-env.d.ts", "jest.config.mjs", "jest.browser.config.mjs", "eslint.config.mjs"]);

/** Hash of every file that shapes `next build` output, plus the lockfile. */
export function buildInputHash() {
  const hash = createHash("sha256");
  const files = [];
  const walk = (dir) => {
    if (!fs.existsSync(dir)) return;
    for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) {
        if (entry.name === "node_modules" || entry.name.startsWith(".")) continue;
        walk(full);
      } else if (entry.isFile()) files.push(full);
    }
  };
  for (const d of BUILD_INPUT_DIRS) walk(path.join(ROOT, d));
  for (const entry of fs.readdirSync(ROOT, { withFileTypes: true })) {
    if (entry.isFile() && BUILD_INPUT_FILES.test(entry.name) && !BUILD_IGNORED_TOP.has(entry.name)) files.push(path.join(ROOT, entry.name));
  }
  files.sort();
  for (const f of files) {
    hash.update(path.relative(ROOT, f));
    hash.update("\0");
    hash.update(fs.readFileSync(f));
    hash.update("\0");
  }
  return hash.digest("hex");
}

export const BUILD_HASH_FILE = path.join(ROOT, ".next", "tessera-build-hash");

/** Runs `next build` unless .next holds a build of exactly the current sources. */
export async function buildIfNeeded({ env, tag = "build", logFile } = {}) {
  const wanted = buildInputHash();
  const have = fs.existsSync(BUILD_HASH_FILE) ? fs.readFileSync(BUILD_HASH_FILE, "utf8").trim() : "";
  if (have === wanted && fs.existsSync(path.join(ROOT, ".next", "BUILD_ID"))) {
    log(tag, "sources unchanged since the last build: skipping next build");
    return false;
  }
  log(tag, `running next build (about a minute)${logFile ? `, log in ${path.relative(ROOT, logFile)}` : ""}…`);
  const started = Date.now();
  const buildEnv = { ...env, NODE_ENV: "production", NEXT_TELEMETRY_DISABLED: "1" };
  try {
    if (logFile) {
      const { stdout, stderr } = await run(path.join(ROOT, "node_modules", ".bin", "next"), ["build"], { env: buildEnv }).catch((err) => {
        fs.writeFileSync(logFile, `${err.stdout ?? ""}\n${err.stderr ?? ""}`);
        throw err;
      });
      fs.writeFileSync(logFile, `${stdout}\n${stderr}`);
    } else {
      await run(path.join(ROOT, "node_modules", ".bin", "next"), ["build"], { env: buildEnv, inherit: true });
    }
  } catch (err) {
    let first = "";
    if (logFile && fs.existsSync(logFile)) {
      first = fs
        .readFileSync(logFile, "utf8")
        .split("\n")
        .filter((l) => /error/i.test(l))
        .slice(0, 3)
        .join(" | ");
    }
    throw new UserFacingError(`next build failed${logFile ? ` (see ${path.relative(ROOT, logFile)})` : ""}${first ? `: ${first}` : ""}\n${err.message}`);
  }
  // Hash again after the build: next build may rewrite tsconfig.json once.
  fs.writeFileSync(BUILD_HASH_FILE, buildInputHash() + "\n");
  log(tag, `next build done in ${Math.round((Date.now() - started) / 1000)} s`);
  return true;
}
