import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { PageHeader } from "@/components/ui/page-header";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { env } from "@/lib/config/env";
import { getCapturedMail } from "@/lib/mail/outbox";
import { outboxEnabled } from "@/lib/mail/outbox-gate";

export const metadata: Metadata = { title: "Outbox message" };

export default async function OutboxMessagePage({ params }: { params: Promise<{ slug: string; id: string }> }) {
  const { slug, id } = await params;
  if (!outboxEnabled(env())) notFound();
  const access = await guardPage(`/w/${slug}/outbox/${id}`, async () => {
    const member = await requireMember(slug, "team.manage");
    // Another workspace's mail is "no such message", exactly like an id that does not exist.
    return getCapturedMail(member.workspace.id, id);
  });
  const mail = access;
  if (!mail) notFound();
  return (
    <div>
      <Link href={`/w/${slug}/outbox`} className="text-sm font-medium text-ochre-700 hover:underline">
        ← All captured mail
      </Link>
      <div className="mt-4">
        <PageHeader title={mail.subject} eyebrow="Captured mail" />
      </div>
      <dl className="mb-6 grid grid-cols-[6rem_1fr] gap-y-1 text-sm">
        <dt className="text-ink-400">From</dt>
        <dd className="text-ink">{mail.from}</dd>
        <dt className="text-ink-400">To</dt>
        <dd className="text-ink" data-testid="mail-to">
          {mail.to.join(", ")}
        </dd>
        <dt className="text-ink-400">Received</dt>
        <dd className="text-ink">{mail.receivedAt.toISOString()}</dd>
      </dl>
      <div className="grid gap-6 xl:grid-cols-2">
        <section>
          <h2 className="mb-2 text-sm font-semibold text-ink">HTML part</h2>
          {mail.html ? (
            // sandbox with no allowances: no scripts, no same-origin access, no forms.
            <iframe
              title="HTML part of the message"
              sandbox=""
              srcDoc={mail.html}
              className="h-[32rem] w-full rounded-lg border border-ink-100 bg-white"
              data-testid="mail-html"
            />
          ) : (
            <p className="text-sm text-ink-400">This message has no HTML part.</p>
          )}
        </section>
        <section>
          <h2 className="mb-2 text-sm font-semibold text-ink">Text part</h2>
          <pre tabIndex={0} aria-label="The message as text" className="h-[32rem] overflow-auto whitespace-pre-wrap rounded-lg border border-ink-100 bg-white p-4 font-mono text-xs text-ink" data-testid="mail-text">
            {mail.text ?? "This message has no text part."}
          </pre>
        </section>
      </div>
    </div>
  );
}
