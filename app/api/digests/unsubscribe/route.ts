import { escapeHtml } from "@/lib/security/html";
import { unsubscribe } from "@/lib/digests/service";
import { verifyUnsubscribeToken } from "@/lib/digests/token";

// One-click unsubscribe (RFC 8058). The token in the link is the only
// credential: signed with NEXTAUTH_SECRET, naming the subscription and an
// expiry. GET shows a confirmation page (mail scanners follow GET links, so
// GET never changes anything); POST unsubscribes — from the mail client's
// "List-Unsubscribe=One-Click" request or from the page's button.

function page(status: number, title: string, body: string): Response {
  const html = `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width"><title>${escapeHtml(title)} · Tessera</title></head>
<body style="margin:0;font-family:Helvetica,Arial,sans-serif;color:#1e2a44;background:#f5f5f4">
<main style="max-width:520px;margin:48px auto;background:#fff;border-top:4px solid #c98a1b;padding:24px">
<p style="margin:0;font-size:12px;letter-spacing:.08em;text-transform:uppercase;color:#c98a1b">Tessera digests</p>
<h1 style="font-size:20px;margin:6px 0 12px">${escapeHtml(title)}</h1>${body}</main></body></html>`;
  return new Response(html, { status, headers: { "content-type": "text/html; charset=utf-8", "cache-control": "no-store", "referrer-policy": "no-referrer" } });
}

async function tokenFrom(request: Request): Promise<string | null> {
  const fromQuery = new URL(request.url).searchParams.get("token");
  if (fromQuery) return fromQuery;
  const type = request.headers.get("content-type") ?? "";
  if (type.includes("application/x-www-form-urlencoded") || type.includes("multipart/form-data")) {
    const form = await request.formData().catch(() => null);
    const value = form?.get("token");
    return typeof value === "string" ? value : null;
  }
  return null;
}

export async function GET(request: Request): Promise<Response> {
  const token = new URL(request.url).searchParams.get("token");
  const check = verifyUnsubscribeToken(token);
  if (!check.ok) return page(400, "This link cannot unsubscribe you", `<p role="alert">${escapeHtml(check.message)}</p>`);
  return page(
    200,
    "Stop these digests?",
    `<p>You will no longer receive Tessera digests from this workspace. You can subscribe again on the Digests screen at any time.</p>
<form method="post" action="?token=${encodeURIComponent(token ?? "")}"><button type="submit" style="background:#1e2a44;color:#fff;border:0;padding:8px 14px;font-size:14px;cursor:pointer">Unsubscribe</button></form>`,
  );
}

export async function POST(request: Request): Promise<Response> {
  const check = verifyUnsubscribeToken(await tokenFrom(request));
  if (!check.ok) return page(400, "This link cannot unsubscribe you", `<p role="alert">${escapeHtml(check.message)}</p>`);
  const result = await unsubscribe(check.subscriptionId);
  if (!result.found) return page(404, "No such subscription", "<p>This subscription no longer exists, so there is nothing to stop.</p>");
  return page(200, "You are unsubscribed", `<p>Tessera will send you no more digests from ${escapeHtml(result.workspaceName ?? "this workspace")}.</p>`);
}
