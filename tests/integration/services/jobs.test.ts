import { spawn } from "node:child_process";
import path from "node:path";
import { getBoss } from "@/lib/jobs/boss";
import { enqueue } from "@/lib/jobs/enqueue";
import { requireTestServices, uniqueAddress } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { closeConnections } from "@/tests/helpers/teardown";
import { waitFor } from "@/tests/helpers/wait";

// scripts/test.mjs (and `npm run services:test`) runs the real worker
// (`tsx worker/main.ts`) next to the test services; this test only enqueues.
beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

describe("pg-boss jobs processed by the worker process", () => {
  test("a mail-test job is picked up, sends its mail and completes", async () => {
    const since = new Date(Date.now() - 1000);
    const to = uniqueAddress("job");
    const subject = `Worker self-check ${Date.now()}`;
    const id = await enqueue("mail-test", { to, subject });
    expect(id).toEqual(expect.any(String));

    const mail = await waitForMailTo(to, { since, subjectContains: "Worker self-check", timeoutMs: 30_000 });
    expect(mail.subject).toBe(subject);
    expect(mail.headers["x-tessera-job"]).toBe(id);

    const boss = await getBoss();
    const job = await waitFor(
      `job ${id} to complete`,
      async () => {
        const j = await boss.getJobById("mail-test", id as string);
        return j?.state === "completed" ? j : null;
      },
      { timeoutMs: 15_000 },
    );
    expect(job.state).toBe("completed");
  });

  test("several jobs are all processed", async () => {
    const since = new Date(Date.now() - 1000);
    const addresses = Array.from({ length: 5 }, (_, i) => uniqueAddress(`batch${i}`));
    await Promise.all(addresses.map((to, i) => enqueue("mail-test", { to, subject: `Batch ${i}` })));
    const mails = await Promise.all(addresses.map((to) => waitForMailTo(to, { since, timeoutMs: 30_000 })));
    expect(mails.map((m) => m.subject).sort()).toEqual(["Batch 0", "Batch 1", "Batch 2", "Batch 3", "Batch 4"]);
  });

  test("enqueue validates the payload and names the field", async () => {
    await expect(enqueue("mail-test", { to: "nobody", subject: "x" })).rejects.toThrow(/enqueue\(mail-test\): invalid payload field "to"/);
  });

  test("a second worker process runs alongside, takes jobs, and stops gracefully on SIGTERM", async () => {
    const root = path.resolve(__dirname, "..", "..", "..");
    const child = spawn(path.join(root, "node_modules", ".bin", "tsx"), [path.join(root, "worker", "main.ts")], {
      cwd: root,
      env: { ...process.env, NODE_ENV: "production", WORKER_CONCURRENCY: "1" },
      stdio: ["ignore", "pipe", "pipe"],
    });
    let output = "";
    child.stdout.on("data", (d) => (output += d));
    child.stderr.on("data", (d) => (output += d));
    const exited = new Promise<number | null>((resolve) => child.on("close", (code) => resolve(code)));
    try {
      await waitFor("the second worker to be ready", async () => /\] ready:/.test(output), { timeoutMs: 60_000 });
      const since = new Date(Date.now() - 1000);
      const addresses = Array.from({ length: 6 }, (_, i) => uniqueAddress(`pair${i}`));
      await Promise.all(addresses.map((to, i) => enqueue("mail-test", { to, subject: `Pair ${i}` })));
      await Promise.all(addresses.map((to) => waitForMailTo(to, { since, timeoutMs: 30_000 })));
    } finally {
      child.kill("SIGTERM");
    }
    expect(await exited).toBe(0);
    expect(output).toMatch(/SIGTERM: finishing active jobs/);
    expect(output).toMatch(/\] stopped/);
  }, 90_000);
});
