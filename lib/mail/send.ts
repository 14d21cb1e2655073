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
    /** A Message-ID chosen by the caller ("<local@domain>"), so a resend of the same mail carries the same one; default: nodemailer makes one. */
    messageId: z
      .string()
      .regex(/^<[^<>@\s]+@[^<>@\s]+>$/, "must look like <local-part@domain>")
      .optional(),
  })
  .refine((m) => m.text !== undefined || m.html !== undefined, { message: "a mail needs text or html", path: ["text"] });

export type SendMailInput = z.input<typeof sendMailSchema>;

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
      headers: mail.headers,
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
