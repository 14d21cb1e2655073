import nodemailer, { type Transporter } from "nodemailer";
import { z } from "zod";
import { env } from "@/lib/config/env";

const addressList = z.union([z.string().email(), z.array(z.string().email()).min(1)]);

export const sendMailSchema = z
  .object({
    to: addressList,
    cc: addressList.optional(),
    bcc: addressList.optional(),
    replyTo: z.string().email().optional(),
    subject: z.string().min(1, "subject is empty").max(300),
    text: z.string().max(1_000_000).optional(),
    html: z.string().max(2_000_000).optional(),
    headers: z.record(z.string(), z.string()).optional(),
    /**
     * The workspace the mail is sent on behalf of, or null for mail of no
     * workspace (the worker's self-check). Required, so no new kind of mail can
     * forget it: the Outbox page of a workspace shows only mail naming it.
     */
    workspaceId: z.number().int().positive().max(2_147_483_647).nullable(),
    /** A Message-ID chosen by the caller ("<local@domain>"), so a resend of the same mail carries the same one; default: nodemailer makes one. */
    messageId: z
      .string()
      .regex(/^<[^<>@\s]+@[^<>@\s]+>$/, "must look like <local-part@domain>")
      .optional(),
  })
  .refine((m) => m.text !== undefined || m.html !== undefined, { message: "a mail needs text or html", path: ["text"] });

export type SendMailInput = z.input<typeof sendMailSchema>;

/** Carries `workspaceId` to the local sink, which files the mail under that workspace (scripts/services/smtp-sink.mjs). */
export const WORKSPACE_HEADER = "X-Tessera-Workspace";

/**
 * The caller's headers with ours set last: a caller-supplied copy of the
 * workspace header (any case) is dropped, so the one a mail carries always
 * comes from `workspaceId`.
 */
export function headersFor(headers: Record<string, string> | undefined, workspaceId: number | null): Record<string, string> {
  const own = Object.fromEntries(Object.entries(headers ?? {}).filter(([name]) => name.toLowerCase() !== WORKSPACE_HEADER.toLowerCase()));
  return workspaceId === null ? own : { ...own, [WORKSPACE_HEADER]: String(workspaceId) };
}

const globalForMail = globalThis as unknown as { tesseraMailer?: Transporter };

function transporter(): Transporter {
  if (!globalForMail.tesseraMailer) {
    const { SMTP_HOST, SMTP_PORT } = env();
    globalForMail.tesseraMailer = nodemailer.createTransport({
      host: SMTP_HOST,
      port: SMTP_PORT,
      secure: false,
      // The local sink offers no TLS; point SMTP_HOST/SMTP_PORT at a relay that accepts plain SMTP.
      ignoreTLS: true,
      connectionTimeout: 10_000,
      greetingTimeout: 10_000,
      socketTimeout: 30_000,
    });
  }
  return globalForMail.tesseraMailer;
}

/**
 * Sends one mail through SMTP (the local sink in development and tests) and
 * returns its Message-ID. Throws with the SMTP host and port named when the
 * server is unreachable or refuses the message.
 */
export async function sendMail(input: SendMailInput): Promise<string> {
  const parsed = sendMailSchema.safeParse(input);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    throw new Error(`sendMail: invalid ${issue?.path.join(".") || "input"}: ${issue?.message}`);
  }
  const mail = parsed.data;
  const { SMTP_HOST, SMTP_PORT, MAIL_FROM } = env();
  try {
    const info = await transporter().sendMail({
      from: MAIL_FROM,
      to: mail.to,
      cc: mail.cc,
      bcc: mail.bcc,
      replyTo: mail.replyTo,
      subject: mail.subject,
      text: mail.text,
      html: mail.html,
      // Kept on real mail too: the captured copy is byte for byte what a relay gets, and the
      // header names only the id of a workspace the recipient was written to on behalf of.
      headers: headersFor(mail.headers, mail.workspaceId),
      messageId: mail.messageId,
    });
    return String(info.messageId);
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    throw new Error(`sendMail: SMTP ${SMTP_HOST}:${SMTP_PORT} did not accept "${mail.subject}": ${reason}`);
  }
}

/** Closes pooled SMTP connections (tests, worker shutdown). */
export function closeMailer(): void {
  globalForMail.tesseraMailer?.close();
  globalForMail.tesseraMailer = undefined;
}
