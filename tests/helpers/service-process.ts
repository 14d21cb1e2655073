import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { env } from "@/lib/config/env";
import { canConnect } from "@/tests/helpers/env";

/**
 * A second copy of one of the suite's services (scripts/services/*.mjs) that a
 * fault test starts and stops at will on a port of its own, so an outage never
 * touches the services the other tests share.
 */
export interface ServiceProcess {
  readonly port: number;
  /** Starts the service and resolves once its port accepts connections. */
  start(): Promise<void>;
  /** Stops it and resolves once its port refuses connections. */
  stop(): Promise<void>;
  /** The service's output so far (for failure messages). */
  output(): string;
}

/** A TCP port on 127.0.0.1 that nothing listens on right now. */
export async function freePort(): Promise<number> {
  const server = net.createServer();
  await new Promise<void>((resolve, reject) => server.once("error", reject).listen(0, "127.0.0.1", resolve));
  const address = server.address();
  await new Promise<void>((resolve) => server.close(() => resolve()));
  if (!address || typeof address === "string") throw new Error("freePort: the OS gave no port");
  return address.port;
}

function portAnswers(port: number): Promise<boolean> {
  return canConnect("127.0.0.1", port, 1_000);
}

async function until(what: string, check: () => Promise<boolean>, timeoutMs: number, log: () => string): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await check())) {
    if (Date.now() > deadline) throw new Error(`${what} (after ${timeoutMs} ms). Output:\n${log()}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

function serviceProcess(name: string, script: string, port: number, env: NodeJS.ProcessEnv): ServiceProcess {
  let child: ChildProcess | null = null;
  let log = "";
  return {
    port,
    output: () => log,
    async start() {
      if (child) throw new Error(`${name} on port ${port} is already running`);
      log += `--- start ${new Date().toISOString()}\n`;
      // With an IPC channel the scripts exit by themselves if jest dies without stopping them.
      const started = spawn(process.execPath, [path.join(process.cwd(), "scripts/services", script)], { env, stdio: ["ignore", "pipe", "pipe", "ipc"] });
      child = started;
      started.stdout?.on("data", (chunk: Buffer) => (log += chunk.toString()));
      started.stderr?.on("data", (chunk: Buffer) => (log += chunk.toString()));
      started.once("exit", () => {
        if (child === started) child = null;
      });
      await until(`${name} did not start listening on 127.0.0.1:${port}`, async () => {
        if (started.exitCode !== null) throw new Error(`${name} exited with code ${started.exitCode} before listening on ${port}:\n${log}`);
        return portAnswers(port);
      }, 20_000, () => log);
    },
    async stop() {
      const running = child;
      if (running) {
        const exited = new Promise<void>((resolve) => running.once("exit", () => resolve()));
        running.kill("SIGTERM");
        const timer = setTimeout(() => running.kill("SIGKILL"), 5_000);
        await exited;
        clearTimeout(timer);
        child = null;
      }
      await until(`${name} still answers on 127.0.0.1:${port} after it was stopped`, async () => !(await portAnswers(port)), 5_000, () => log);
    },
  };
}

/** s3rver (scripts/services/s3-server.mjs) with one bucket, its objects kept in `directory` across restarts. */
export function s3rverProcess(options: { port: number; bucket: string; directory: string; corsOrigins?: string[] }): ServiceProcess {
  return serviceProcess("s3rver", "s3-server.mjs", options.port, {
    ...process.env,
    S3_PORT: String(options.port),
    S3_BUCKET: options.bucket,
    S3_DIR: options.directory,
    S3_CORS_ORIGINS: (options.corsOrigins ?? []).join(","),
  });
}

/** The SMTP sink (scripts/services/smtp-sink.mjs): stores what it accepts in outbox_messages of DATABASE_URL. */
export function smtpSinkProcess(options: { port: number; databaseUrl: string }): ServiceProcess {
  return serviceProcess("smtp-sink", "smtp-sink.mjs", options.port, { ...process.env, SMTP_PORT: String(options.port), DATABASE_URL: options.databaseUrl });
}

/** An s3rver of one test file's own (see `ownS3rver`); `remove()` stops it and deletes its objects. */
export interface OwnS3rver extends ServiceProcess {
  remove(): Promise<void>;
}

/**
 * Starts an s3rver with `bucket` in a fresh temporary directory and points
 * S3_ENDPOINT and S3_BUCKET at it, for a fault test that stops its store
 * without touching the one the other tests share. Throws if the configuration
 * was read before (the code under test would still talk to the shared store).
 */
export async function ownS3rver(bucket: string): Promise<OwnS3rver> {
  const directory = fs.mkdtempSync(path.join(os.tmpdir(), `tessera-${bucket}-`));
  const store = s3rverProcess({ port: await freePort(), bucket, directory });
  await store.start();
  process.env.S3_ENDPOINT = `http://127.0.0.1:${store.port}`;
  process.env.S3_BUCKET = bucket;
  if (env().S3_ENDPOINT !== process.env.S3_ENDPOINT) throw new Error(`the configuration was read before the test pointed S3_ENDPOINT at its own s3rver (${env().S3_ENDPOINT})`);
  return {
    ...store,
    async remove() {
      await store.stop().catch(() => undefined);
      fs.rmSync(directory, { recursive: true, force: true });
    },
  };
}
