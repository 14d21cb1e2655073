// Keeps track of everything a start/test run has started, and stops it all in
// reverse order. Each child gets its own process group (detached) so that a
// Ctrl-C reaches only this script, which then stops children in order, and so
// that grandchildren (npx → node) are stopped with their parent.
import { spawn } from "node:child_process";
import fs from "node:fs";
import readline from "node:readline";
import { ROOT, dim, log, sleep } from "./util.mjs";

export class Supervisor {
  /** @param {{pidFile?: string}} options pidFile records child pids so a later run can clean up after a killed one */
  constructor({ pidFile } = {}) {
    this.pidFile = pidFile;
    /** @type {{name:string, stop:() => Promise<void>}[]} */
    this.stack = [];
    this.children = [];
    this.stopping = false;
    /** Called when a child exits while we are not stopping. */
    this.onUnexpectedExit = null;
  }

  /** Registers a cleanup step (e.g. pg_ctl stop) run in reverse order by stopAll(). */
  defer(name, stop) {
    this.stack.push({ name, stop });
  }

  /**
   * Starts a long-running child. Output is prefixed with [name] on this terminal,
   * or appended to logFile when given.
   */
  spawn(name, cmd, args, { env = process.env, cwd = ROOT, logFile, ipc = false, quiet = false, inherit = false, stopTimeoutMs = 10_000 } = {}) {
    let out = "pipe";
    let fd = null;
    if (inherit) {
      out = "inherit";
    } else if (logFile) {
      fd = fs.openSync(logFile, "a");
      out = fd;
    } else if (quiet) {
      out = "ignore";
    }
    const stdio = ["ignore", out, out];
    if (ipc) stdio.push("ipc");
    const child = spawn(cmd, args, { cwd, env, stdio, detached: true });
    if (fd !== null) fs.closeSync(fd);
    const record = { name, child, pid: child.pid, exited: false, code: null, signal: null };
    record.exitPromise = new Promise((resolve) => {
      child.once("exit", (code, signal) => {
        record.exited = true;
        record.code = code;
        record.signal = signal;
        resolve(record);
        if (!this.stopping && this.onUnexpectedExit) this.onUnexpectedExit(record);
      });
      child.once("error", (err) => {
        log(name, `could not start ${cmd}: ${err.message}`);
        record.exited = true;
        record.code = 127;
        resolve(record);
        if (!this.stopping && this.onUnexpectedExit) this.onUnexpectedExit(record);
      });
    });
    record.lines = [];
    record.logFile = logFile;
    for (const stream of [child.stdout, child.stderr]) {
      if (!stream) continue;
      const rl = readline.createInterface({ input: stream });
      rl.on("line", (line) => {
        record.lines.push(line);
        if (record.lines.length > 500) record.lines.shift();
        process.stdout.write(`${dim(`[${name}]`)} ${line}\n`);
      });
    }
    /** Resolves when the child printed a line matching `pattern`; rejects if it exits first or after timeoutMs. */
    record.waitForLine = async (pattern, timeoutMs = 60_000) => {
      const deadline = Date.now() + timeoutMs;
      for (;;) {
        const text = record.logFile ? (fs.existsSync(record.logFile) ? fs.readFileSync(record.logFile, "utf8") : "") : record.lines.join("\n");
        if (pattern.test(text)) return;
        if (record.exited) throw new Error(`${name} exited (${record.signal ?? `exit ${record.code}`}) before printing ${pattern}`);
        if (Date.now() > deadline) throw new Error(`${name} did not print ${pattern} within ${Math.round(timeoutMs / 1000)} s`);
        await sleep(150);
      }
    };
    this.children.push(record);
    this.writePidFile();
    this.stack.push({ name, stop: () => this.stopChild(record, stopTimeoutMs) });
    return record;
  }

  writePidFile() {
    if (!this.pidFile) return;
    const live = this.children.filter((c) => !c.exited && c.pid).map((c) => `${c.pid} ${c.name}`);
    try {
      fs.writeFileSync(this.pidFile, live.join("\n") + "\n");
    } catch {
      // storage folder gone (wiped): nothing to record
    }
  }

  /** SIGTERM to the child's process group, SIGKILL after the timeout. */
  async stopChild(record, timeoutMs = 10_000) {
    const group = -record.pid;
    const signalGroup = (sig) => {
      try {
        process.kill(group, sig);
        return true;
      } catch {
        return false;
      }
    };
    if (!record.exited) {
      signalGroup("SIGTERM");
      const timer = sleep(timeoutMs).then(() => "timeout");
      const result = await Promise.race([record.exitPromise.then(() => "exited"), timer]);
      if (result === "timeout") {
        log(record.name, `did not stop within ${timeoutMs / 1000} s; killing it`);
        signalGroup("SIGKILL");
        await record.exitPromise;
      }
    }
    // Stragglers of the group (grandchildren) go too.
    if (signalGroup("SIGTERM")) {
      await sleep(300);
      signalGroup("SIGKILL");
    }
  }

  /** Stops everything in reverse order of start. Safe to call twice. */
  async stopAll() {
    if (this.stopping && this.stopPromise) return this.stopPromise;
    this.stopping = true;
    this.stopPromise = (async () => {
      while (this.stack.length) {
        const step = this.stack.pop();
        try {
          await step.stop();
        } catch (err) {
          log(step.name, `stop failed: ${err.message}`);
        }
      }
      if (this.pidFile) fs.rmSync(this.pidFile, { force: true });
    })();
    return this.stopPromise;
  }

  /** Immediate SIGKILL of every child group (second Ctrl-C). */
  killAllNow() {
    for (const record of this.children) {
      try {
        process.kill(-record.pid, "SIGKILL");
      } catch {
        // already gone
      }
    }
  }
}

/**
 * Ctrl-C / SIGTERM / SIGHUP: run `onStop` once (graceful); a second signal kills
 * children at once, but still lets `onStop` finish the non-child cleanups.
 */
export function installSignalHandlers(supervisor, onStop) {
  let count = 0;
  const handler = (signal) => {
    count += 1;
    if (count === 1) {
      process.stdout.write(`\n`);
      log("tessera", `${signal} received: stopping everything (press Ctrl-C again to force)…`);
      Promise.resolve(onStop(signal)).catch((err) => {
        log("tessera", `stop failed: ${err.message}`);
        process.exit(1);
      });
    } else {
      log("tessera", "forcing: killing child processes");
      supervisor.killAllNow();
    }
  };
  for (const sig of ["SIGINT", "SIGTERM", "SIGHUP"]) process.on(sig, handler);
}

/**
 * Stops process groups recorded in a pid file by an earlier run that was killed
 * before it could clean up. Only processes whose command line mentions this
 * project folder are touched.
 */
export async function killStaleChildren(pidFile) {
  if (!fs.existsSync(pidFile)) return 0;
  let killed = 0;
  for (const line of fs.readFileSync(pidFile, "utf8").split("\n")) {
    const [pidText, name] = line.trim().split(/\s+/);
    const pid = Number(pidText);
    if (!Number.isInteger(pid) || pid <= 1) continue;
    let cmdline = "";
    try {
      cmdline = fs.readFileSync(`/proc/${pid}/cmdline`, "utf8").replace(/\0/g, " ");
    } catch {
      continue; // gone
    }
    if (!cmdline.includes(ROOT)) continue;
    log("tessera", `stopping ${name ?? "a process"} (pid ${pid}) left over from an earlier run`);
    try {
      process.kill(-pid, "SIGTERM");
    } catch {
      try {
        process.kill(pid, "SIGTERM");
      } catch {
        // gone meanwhile
      }
    }
    killed += 1;
  }
  if (killed) {
    await sleep(2_000);
    for (const line of fs.readFileSync(pidFile, "utf8").split("\n")) {
      const pid = Number(line.trim().split(/\s+/)[0]);
      if (Number.isInteger(pid) && pid > 1 && fs.existsSync(`/proc/${pid}`)) {
        try {
          process.kill(-pid, "SIGKILL");
        } catch {
          // gone
        }
      }
    }
  }
  fs.rmSync(pidFile, { force: true });
  return killed;
}
