// What the demo seed scripts share: the demo workspace's names, the demo
// steward's member context, an upload made exactly as the browser makes one,
// and how a seed script ends (pools closed, a failure as one line and exit 1).
// A module, not a script: importing it runs nothing.
import fs from "node:fs";
import path from "node:path";
import { createHash } from "node:crypto";
import { z } from "zod";
import { authorizeMember, type MemberContext } from "@/lib/auth/guard";
import { db } from "@/lib/db";
import { completeUpload, createUpload } from "@/lib/intake/service";
import { closeIntakePool } from "@/lib/intake/ingest-db";
import { closeS3 } from "@/lib/storage/s3";
import { models } from "@/lib/models";

export const ROOT = path.resolve(__dirname, "..", "..");
const ACCOUNTS = path.join(ROOT, "seeders", "demo-accounts.json");
export const DEMO_BOUNDARY_SET = "Veldmark districts";
export const DEMO_PANEL = "Veldmark district indicators 2008–2024";

const accountsSchema = z.object({
  workspace: z.object({ slug: z.string() }),
  accounts: z.array(z.object({ email: z.string(), role: z.string() })),
});

/** The demo steward, authorised to curate the demo workspace's data. */
export async function demoStewardContext(): Promise<MemberContext> {
  const accounts = accountsSchema.parse(JSON.parse(fs.readFileSync(ACCOUNTS, "utf8")));
  const steward = accounts.accounts.find((a) => a.role === "steward");
  if (!steward) throw new Error(`${path.relative(ROOT, ACCOUNTS)} lists no steward account`);
  const user = await models().User.findOne({ where: { email: steward.email.toLowerCase() } });
  if (!user) throw new Error(`demo steward ${steward.email} is not in the database; run the seeders first (npx sequelize-cli db:seed:all)`);
  return authorizeMember(user.id, accounts.workspace.slug, "data.curate");
}

/** Uploads bytes exactly as the browser does: presigned PUT, then the server-side size and SHA-256 check. */
export async function uploadLikeTheBrowser(member: MemberContext, kind: "boundaries" | "panel", fileName: string, bytes: Buffer): Promise<{ uploadId: string; sha256: string }> {
  const sha256 = createHash("sha256").update(bytes).digest("hex");
  const ticket = await createUpload(member, { kind, fileName, size: bytes.length, sha256 });
  const response = await fetch(ticket.url, { method: "PUT", headers: { "Content-Type": ticket.contentType }, body: new Uint8Array(bytes) });
  if (!response.ok) throw new Error(`PUT ${fileName} to S3 failed: HTTP ${response.status} ${await response.text()}`);
  const checked = await completeUpload(member, ticket.uploadId);
  if (checked.state !== "received") throw new Error(`upload of ${fileName} failed: ${checked.error}`);
  return { uploadId: ticket.uploadId, sha256 };
}

/** Runs a seed script's main: closes the pools either way; a failure is one line on stderr and exit code 1. */
export function runSeedScript(tag: string, main: () => Promise<void>): void {
  const close = async () => {
    await closeIntakePool().catch(() => undefined);
    await db().close().catch(() => undefined);
    closeS3();
  };
  main()
    .then(close)
    .catch(async (err: unknown) => {
      console.error(`[${tag}] failed: ${err instanceof Error ? err.message : String(err)}`);
      await close();
      process.exit(1);
    });
}
