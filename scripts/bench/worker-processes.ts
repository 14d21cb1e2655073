/**
 * Job worker processes started by a test or a benchmark: `worker/main.ts`
 * run by node itself with tsx as a loader (not through the tsx launcher, which
 * would put a second process in between: a SIGKILL must reach the worker).
 *
 * Each gets its own label (WORKER_LABEL, recorded on the run pieces it runs)
 * and, usually, a jobs schema of its own (JOBS_SCHEMA) so that no other
 * worker on the same database — the test bring-up's, say — can take its jobs.
 */
import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";

const ROOT = path.resolve(__dirname, "..", "..");

export interface WorkerProcess {
  label: string;
  child: ChildProcess;
  /** Every line the worker printed so far (stdout and stderr), for diagnostics. */
  lines: string[];
  /** Resolves with the exit code or signal once the process has ended. */
  exited: Promise<string>;
}

/**
 * Starts a worker and resolves once it reports ready (its lease taken, its
 * queues subscribed). `env` is added to this process's environment.
 */
export async function startWorkerProcess(label: string, env: Record<string, string>, readyTimeoutMs = 90_000): Promise<WorkerProcess> {
  const child = spawn(process.execPath, ["--import", "tsx", path.join(ROOT, "worker", "main.ts")], {
    cwd: ROOT,
    env: { ...process.env, ...env, WORKER_LABEL: label },
    stdio: ["ignore", "pipe", "pipe"],
  });
  const lines: string[] = [];
  const exited = new Promise<string>((resolve) => child.once("exit", (code, signal) => resolve(signal ?? `exit ${code}`)));
  const ready = new Promise<void>((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`worker ${label} did not report ready within ${readyTimeoutMs} ms:\n${lines.slice(-20).join("\n")}`)), readyTimeoutMs);
    const collect = (chunk: Buffer) => {
      for (const line of chunk.toString("utf8").split("\n")) {
        if (!line) continue;
        lines.push(line);
        if (line.includes("] ready: ")) {
          clearTimeout(timer);
          resolve();
        }
      }
    };
    child.stdout?.on("data", collect);
    child.stderr?.on("data", collect);
    void exited.then((how) => {
      clearTimeout(timer);
      reject(new Error(`worker ${label} ended (${how}) before it was ready:\n${lines.slice(-20).join("\n")}`));
    });
  });
  await ready;
  return { label, child, lines, exited };
}

/** Stops a worker gracefully (SIGTERM: active jobs finish first) and waits for it to end. */
export async function stopWorkerProcess(worker: WorkerProcess): Promise<string> {
  if (worker.child.exitCode === null && worker.child.signalCode === null) worker.child.kill("SIGTERM");
  return worker.exited;
}
