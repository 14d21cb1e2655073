import { QueryTypes } from "sequelize";
import { db } from "@/lib/db";
import { sendMail } from "@/lib/mail/send";
import { escapeHtml } from "@/lib/security/html";
import type { InvitationEmailPayload } from "@/lib/jobs/payloads";

// Renders and sends the invitation e-mail. Runs in the worker (worker/handlers.ts),
// never in the request that created the invitation.

function formatDate(iso: string): string {
  return new Intl.DateTimeFormat("en-GB", { dateStyle: "long", timeStyle: "short", timeZone: "UTC" }).format(new Date(iso)) + " UTC";
}

export function renderInvitationEmail(p: InvitationEmailPayload): { subject: string; text: string; html: string } {
  const subject = `You are invited to ${p.workspaceName} on Tessera`;
  const expires = formatDate(p.expiresAt);
  const text = [
    `${p.inviterName} has invited you to join "${p.workspaceName}" on Tessera as ${p.roleLabel}.`,
    "",
    "Open this link to accept:",
    p.acceptUrl,
    "",
    `The link works once and expires on ${expires}.`,
    "If you did not expect this invitation, ignore this e-mail; nothing happens until the link is opened and accepted.",
    "",
    "Tessera — a data room for regional economists",
  ].join("\n");
  const e = {
    inviter: escapeHtml(p.inviterName),
    workspace: escapeHtml(p.workspaceName),
    role: escapeHtml(p.roleLabel),
    url: escapeHtml(p.acceptUrl),
    expires: escapeHtml(expires),
  };
  const html = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>${escapeHtml(subject)}</title></head>
<body style="margin:0;padding:0;background:#f3f5f9;font-family:Inter,Segoe UI,Helvetica,Arial,sans-serif;color:#1e2a44">
  <table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="background:#f3f5f9;padding:32px 0">
    <tr><td align="center">
      <table role="presentation" width="100%" cellpadding="0" cellspacing="0" style="max-width:560px;background:#ffffff;border-radius:8px;overflow:hidden;border:1px solid #e3e7ef">
        <tr><td style="background:#1e2a44;padding:18px 28px;color:#ffffff;font-size:18px;font-weight:600;letter-spacing:0.02em">
          Tessera<span style="display:inline-block;width:8px;height:8px;margin-left:6px;background:#c98a1b;border-radius:1px"></span>
        </td></tr>
        <tr><td style="padding:28px">
          <p style="margin:0 0 16px;font-size:16px;line-height:1.5">${e.inviter} has invited you to join <strong>${e.workspace}</strong> as <strong>${e.role}</strong>.</p>
          <p style="margin:0 0 24px;font-size:14px;line-height:1.5;color:#45557b">Tessera is where the team keeps its regional indicator panels and boundaries, and follows how spatial clustering changes over time.</p>
          <p style="margin:0 0 24px"><a href="${e.url}" style="display:inline-block;background:#c98a1b;color:#ffffff;text-decoration:none;font-weight:600;padding:12px 20px;border-radius:6px">Accept the invitation</a></p>
          <p style="margin:0 0 8px;font-size:13px;color:#45557b">Or paste this link into your browser:</p>
          <p style="margin:0 0 24px;font-size:13px;word-break:break-all"><a href="${e.url}" style="color:#1e2a44">${e.url}</a></p>
          <p style="margin:0;font-size:13px;color:#64749a">The link works once and expires on ${e.expires}. If you did not expect this invitation, ignore this e-mail.</p>
        </td></tr>
      </table>
    </td></tr>
  </table>
</body></html>`;
  return { subject, text, html };
}

/** The workspace an invitation belongs to, read from its row rather than trusted from the job payload. */
async function invitationWorkspaceId(invitationId: number): Promise<number> {
  const rows = await db().query<{ workspace_id: number }>("SELECT workspace_id FROM invitations WHERE id = $1", { bind: [invitationId], type: QueryTypes.SELECT });
  if (!rows[0]) throw new Error(`invitation ${invitationId} no longer exists; its e-mail is not sent`);
  return Number(rows[0].workspace_id);
}

export async function sendInvitationEmail(payload: InvitationEmailPayload, jobId: string): Promise<string> {
  const mail = renderInvitationEmail(payload);
  const workspaceId = await invitationWorkspaceId(payload.invitationId);
  return sendMail({ to: payload.to, ...mail, headers: { "X-Tessera-Job": jobId, "X-Tessera-Kind": "invitation" }, workspaceId });
}
