/**
 * CPU seconds spent by processes, from Linux's /proc (utime + stime, plus the
 * times of reaped children where asked). Benchmarks use it to say where a
 * run's time went — the workers or PostgreSQL — rather than guess. Elsewhere
 * than Linux every reading is null.
 */
import { execFileSync } from "node:child_process";
import { readdirSync, readFileSync } from "node:fs";

let ticksPerSecond: number | null | undefined;

function ticks(): number | null {
  if (ticksPerSecond === undefined) {
    try {
      ticksPerSecond = Number(execFileSync("getconf", ["CLK_TCK"], { encoding: "utf8" }).trim()) || null;
    } catch {
      ticksPerSecond = null;
    }
  }
  return ticksPerSecond;
}

/** Fields of /proc/<pid>/stat after the command name (which may hold spaces and parentheses). */
function statFields(pid: number): string[] | null {
  try {
    const text = readFileSync(`/proc/${pid}/stat`, "utf8");
    return text.slice(text.lastIndexOf(")") + 2).split(" ");
  } catch {
    return null;
  }
}

/** CPU seconds of one process; with `reapedChildren`, also of the children it has waited for. */
export function processCpuSeconds(pid: number, reapedChildren = false): number | null {
  const hz = ticks();
  const f = statFields(pid);
  if (!hz || !f) return null;
  // After the name: state(0) ppid(1) … utime(11) stime(12) cutime(13) cstime(14), see proc(5).
  const own = Number(f[11]) + Number(f[12]);
  return (reapedChildren ? own + Number(f[13]) + Number(f[14]) : own) / hz;
}

/**
 * CPU seconds of a PostgreSQL cluster: the postmaster with every backend it
 * has reaped, plus the backends alive now. Counts each backend once: a live
 * one is not yet in the postmaster's reaped total.
 */
export function clusterCpuSeconds(postmasterPid: number): number | null {
  let total = processCpuSeconds(postmasterPid, true);
  if (total === null) return null;
  for (const entry of readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    const f = statFields(Number(entry));
    if (f && Number(f[1]) === postmasterPid) total += processCpuSeconds(Number(entry)) ?? 0;
  }
  return total;
}

/** The postmaster behind a backend (the parent of `pg_backend_pid()`), or null. */
export function postmasterOf(backendPid: number): number | null {
  const f = statFields(backendPid);
  return f ? Number(f[1]) : null;
}
