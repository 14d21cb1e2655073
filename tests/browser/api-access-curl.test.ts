import { execFile } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import demo from "@/seeders/demo-accounts.json";
import { authorizeMember } from "@/lib/auth/guard";
import { models } from "@/lib/models";
import { createToken } from "@/lib/tokens/service";
import { demoRun } from "@/tests/helpers/demo-run";
import { testServices } from "@/tests/helpers/env";
import { closeConnections } from "@/tests/helpers/teardown";

// The curl calls of docs/api-access.md, taken from its ```sh blocks so the
// guide cannot drift from what Tessera answers, run with a fresh token
// against the running test app.

const run = promisify(execFile);
const slug = demo.workspace.slug;
const DOC = path.join(process.cwd(), "docs", "api-access.md");

/** The ```sh blocks of the guide that call curl, in order. */
function curlBlocks(): string[] {
  const text = fs.readFileSync(DOC, "utf8");
  return [...text.matchAll(/```sh\n([\s\S]*?)```/g)].map((m) => m[1].trim()).filter((block) => /\bcurl\b/.test(block));
}

let env: NodeJS.ProcessEnv;
let runId: number;
let workdir: string;

beforeAll(async () => {
  const { appUrl } = testServices();
  const economist = demo.accounts.find((a) => a.role === "economist");
  if (!economist) throw new Error("demo-accounts.json has no economist");
  const user = await models().User.findOne({ where: { email: economist.email } });
  if (!user) throw new Error(`the demo economist ${economist.email} is missing`);
  const member = await authorizeMember(user.id, slug, "results.view");
  const { token } = await createToken(member, { name: "docs curl check", role: "economist", expiresInDays: 7 });
  runId = (await demoRun(slug)).id;
  workdir = fs.mkdtempSync(path.join(os.tmpdir(), "tessera-curl-"));
  env = { ...process.env, TESSERA_URL: appUrl.replace(/\/$/, ""), TESSERA_WORKSPACE: slug, TESSERA_TOKEN: token, RUN_ID: String(runId) };
});
afterAll(async () => {
  if (workdir) fs.rmSync(workdir, { recursive: true, force: true });
  await closeConnections();
});

const sh = (block: string) => run("sh", ["-eu", "-c", block], { cwd: workdir, env, maxBuffer: 64 * 1024 * 1024 });

it("the guide has its three curl calls: the run list, the global results as CSV and as JSON", () => {
  const blocks = curlBlocks();
  expect(blocks).toHaveLength(3);
  expect(blocks.every((b) => b.includes('Authorization: Bearer $TESSERA_TOKEN'))).toBe(true);
});

it("lists the workspace's runs with the token", async () => {
  const [block] = curlBlocks().filter((b) => !b.includes("/export/"));
  const { stdout } = await sh(block);
  const answer = JSON.parse(stdout) as { runs: { id: number; state: string }[] };
  expect(answer.runs.find((r) => r.id === runId)?.state).toBe("completed");
});

it("saves the run's global results as CSV", async () => {
  const [block] = curlBlocks().filter((b) => b.includes("format=csv"));
  await sh(block);
  const csv = fs.readFileSync(path.join(workdir, "global.csv"), "utf8");
  const lines = csv.split("\r\n").filter(Boolean);
  expect(lines[0].startsWith("run,indicator,period,period_index,status")).toBe(true);
  expect(lines[0].split(",")).toContain("moran_i");
  expect(lines.length).toBeGreaterThan(1);
});

it("reads the run's global results as JSON", async () => {
  const [block] = curlBlocks().filter((b) => b.includes("format=json"));
  const { stdout } = await sh(block);
  const answer = JSON.parse(stdout) as { format: string; kind: string; workspace: string; rows: Record<string, unknown>[] };
  expect(answer.format).toBe("tessera-export/1");
  expect(answer.kind).toBe("global");
  expect(answer.workspace).toBe(slug);
  expect(answer.rows.length).toBeGreaterThan(0);
  expect(answer.rows[0]).toHaveProperty("moran_i");
});

it("fails loudly (exit status and Tessera's sentence) with a token that is not valid", async () => {
  const [block] = curlBlocks().filter((b) => !b.includes("/export/"));
  const bad = run("sh", ["-eu", "-c", block], { cwd: workdir, env: { ...env, TESSERA_TOKEN: "tsr_not-a-token" } });
  await expect(bad).rejects.toMatchObject({ stdout: expect.stringContaining("not valid") });
});
