import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { env } from "@/lib/config/env";
import { listCapturedMail } from "@/lib/mail/outbox";
import { outboxEnabled } from "@/lib/mail/outbox-gate";

export const metadata: Metadata = { title: "Outbox" };

const timeFormat = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium", timeStyle: "medium" });

export default async function OutboxPage({ params }: { params: Promise<{ slug: string }> }) {
  const { slug } = await params;
  // Local setup only: unless mail goes to the local sink, the screen does not exist.
  if (!outboxEnabled(env())) notFound();
  const access = await guardPage(`/w/${slug}/outbox`, async () => {
    const member = await requireMember(slug, "team.manage");
    return listCapturedMail(member.workspace.id, { limit: 100 });
  });
  const mails = access;
  return (
    <div>
      <PageHeader title="Outbox" eyebrow="Development only">
        Every e-mail Tessera sent on behalf of this workspace, as captured by the local mail sink. Nothing here left this machine.
      </PageHeader>
      {mails.length === 0 ? (
        <p className="rounded-lg border border-dashed border-ink-200 p-6 text-sm text-ink-500">No mail has been sent yet.</p>
      ) : (
        <ul className="divide-y divide-ink-50 rounded-lg border border-ink-100 bg-white shadow-sm" data-testid="outbox-list">
          {mails.map((m) => (
            <li key={m.id}>
              <Link href={`/w/${slug}/outbox/${m.id}`} className="flex items-baseline gap-4 px-5 py-3 hover:bg-ink-50">
                <span className="w-44 shrink-0 text-sm tabular-nums text-ink-400">{timeFormat.format(m.receivedAt)}</span>
                <span className="min-w-0 flex-1">
                  <span className="block truncate font-medium text-ink">{m.subject}</span>
                  <span className="block truncate text-sm text-ink-500">to {m.to.join(", ")}</span>
                </span>
              </Link>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
