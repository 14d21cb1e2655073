import { db } from "@/lib/db";
import { stopBoss } from "@/lib/jobs/boss";
import { closeMailer } from "@/lib/mail/send";
import { closeS3 } from "@/lib/storage/s3";

/**
 * Call in afterAll of integration tests that used the database, pg-boss, SMTP
 * or S3 singletons, so jest exits without open handles.
 */
export async function closeConnections(): Promise<void> {
  await stopBoss(5_000).catch(() => undefined);
  closeMailer();
  closeS3();
  const globalForDb = globalThis as unknown as { tesseraSequelize?: unknown };
  if (globalForDb.tesseraSequelize) {
    await db().close().catch(() => undefined);
    globalForDb.tesseraSequelize = undefined;
  }
}
