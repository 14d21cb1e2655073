import { QueryTypes } from "sequelize";
import { z } from "zod";
import { db } from "@/lib/db";

/** A message captured by the local SMTP sink (table outbox_messages). */
export type CapturedMail = {
  id: number;
  messageId: string | null;
  from: string;
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  headers: Record<string, string | string[]>;
  receivedAt: Date;
};

/** The list view leaves out bodies and the raw source. */
export type CapturedMailSummary = Pick<CapturedMail, "id" | "messageId" | "from" | "to" | "subject" | "receivedAt">;

type Row = {
  id: number;
  message_id: string | null;
  from: string;
  to: string[];
  subject: string;
  text: string | null;
  html: string | null;
  headers: Record<string, string | string[]>;
  received_at: Date;
};

function toMail(row: Row): CapturedMail {
  return {
    id: Number(row.id),
    messageId: row.message_id,
    from: row.from,
    to: row.to ?? [],
    subject: row.subject,
    text: row.text,
    html: row.html,
    headers: row.headers ?? {},
    receivedAt: new Date(row.received_at),
  };
}

const listOptions = z.object({
  limit: z.coerce.number().int().min(1).max(500).default(50),
  offset: z.coerce.number().int().min(0).default(0),
});

const workspaceIdSchema = z.number().int().positive();

/**
 * Mail sent on behalf of `workspaceId`, newest first. Mail of another
 * workspace, or of none (the worker's self-check, mail captured before
 * workspaces were recorded), is never listed.
 */
export async function listCapturedMail(workspaceId: number, options: z.input<typeof listOptions> = {}): Promise<CapturedMailSummary[]> {
  const { limit, offset } = listOptions.parse(options);
  const rows = await db().query<Omit<Row, "text" | "html" | "headers">>(
    `SELECT id, message_id, "from", "to", subject, received_at FROM outbox_messages
     WHERE workspace_id = :workspaceId
     ORDER BY received_at DESC, id DESC LIMIT :limit OFFSET :offset`,
    { type: QueryTypes.SELECT, replacements: { workspaceId: workspaceIdSchema.parse(workspaceId), limit, offset } },
  );
  return rows.map((r) => ({ id: Number(r.id), messageId: r.message_id, from: r.from, to: r.to ?? [], subject: r.subject, receivedAt: new Date(r.received_at) }));
}

/** One message of `workspaceId` with bodies and headers, or null when there is no such id in that workspace. */
export async function getCapturedMail(workspaceId: number, id: number | string): Promise<CapturedMail | null> {
  const parsed = z.coerce.number().int().positive().max(2_147_483_647).safeParse(id);
  if (!parsed.success) return null;
  const rows = await db().query<Row>(
    `SELECT id, message_id, "from", "to", subject, text, html, headers, received_at FROM outbox_messages WHERE id = :id AND workspace_id = :workspaceId`,
    { type: QueryTypes.SELECT, replacements: { id: parsed.data, workspaceId: workspaceIdSchema.parse(workspaceId) } },
  );
  return rows[0] ? toMail(rows[0]) : null;
}

/** For tests and scripts, across all workspaces: the most recent message addressed (To, Cc or Bcc) to `address`, optionally only those received after `since`. */
export async function latestMailTo(address: string, options: { since?: Date; subjectContains?: string } = {}): Promise<CapturedMail | null> {
  const email = z.string().email().parse(address.trim()).toLowerCase();
  const rows = await db().query<Row>(
    `SELECT id, message_id, "from", "to", subject, text, html, headers, received_at FROM outbox_messages
     WHERE :email = ANY("to")
       AND (CAST(:since AS timestamptz) IS NULL OR received_at >= CAST(:since AS timestamptz))
       AND (CAST(:subject AS text) IS NULL OR strpos(subject, CAST(:subject AS text)) > 0)
     ORDER BY received_at DESC, id DESC LIMIT 1`,
    {
      type: QueryTypes.SELECT,
      replacements: { email, since: options.since ? options.since.toISOString() : null, subject: options.subjectContains ?? null },
    },
  );
  return rows[0] ? toMail(rows[0]) : null;
}
