import type { JobPayload } from "@/lib/jobs/queues";
import { ingestBoundaryVersion } from "./ingest-boundaries";
import { ingestPanelVersion } from "./ingest-panel";

/** Payload of the `intake-validate` queue (schema in lib/jobs/queues.ts): which version to validate and store. */
export type IntakeValidatePayload = JobPayload<"intake-validate">;

/**
 * The worker's handler for `intake-validate`. Bad content never throws (it
 * becomes a rejected version with its report); a version that is no longer
 * `uploaded` is skipped, so a retried job is harmless.
 */
export async function runIntakeValidation(payload: IntakeValidatePayload, log: (message: string) => void = () => undefined): Promise<void> {
  const outcome = payload.kind === "panel" ? await ingestPanelVersion(payload.versionId) : await ingestBoundaryVersion(payload.versionId);
  if (outcome.state === "skipped") log(`${payload.kind} version ${payload.versionId}: skipped (${outcome.reason})`);
  else log(`${payload.kind} version ${payload.versionId}: ${outcome.state}`);
}
