import { latestMailTo, type CapturedMail } from "@/lib/mail/outbox";
import { waitFor } from "@/tests/helpers/wait";

/**
 * Waits until the SMTP sink has stored a message to `address` (received after
 * `since`, subject containing `subjectContains` when given) and returns it.
 */
export function waitForMailTo(
  address: string,
  options: { since?: Date; subjectContains?: string; timeoutMs?: number } = {},
): Promise<CapturedMail> {
  return waitFor(
    `a mail to ${address}${options.subjectContains ? ` with "${options.subjectContains}" in the subject` : ""}`,
    () => latestMailTo(address, { since: options.since, subjectContains: options.subjectContains }),
    { timeoutMs: options.timeoutMs ?? 20_000, intervalMs: 250 },
  );
}

/** The first http(s) link in a captured mail's text (e.g. an invitation link). */
export function firstLink(mail: Pick<CapturedMail, "text" | "html">): string | null {
  const match = /(https?:\/\/[^\s"'<>]+)/.exec(mail.text ?? mail.html ?? "");
  return match ? match[1] : null;
}
