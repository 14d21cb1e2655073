import { spawn } from "node:child_process";
import { join } from "node:path";

const ROOT = join(__dirname, "..", "..");

/** What one run of the statistics CLI printed and how it exited. */
export interface CliRun {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Runs `npx tsx scripts/stats-cli.ts …args` from the repository root, as a batch user would. */
export function runStatsCli(args: string[]): Promise<CliRun> {
  return new Promise((resolve) => {
    const child = spawn("npx", ["tsx", "scripts/stats-cli.ts", ...args], { cwd: ROOT, env: { ...process.env, NODE_OPTIONS: "" } });
    let stdout = "";
    let stderr = "";
    child.stdout.on("data", (chunk: Buffer) => (stdout += chunk.toString()));
    child.stderr.on("data", (chunk: Buffer) => (stderr += chunk.toString()));
    child.on("close", (code) => resolve({ code, stdout, stderr }));
  });
}
