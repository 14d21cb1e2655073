"use client";

import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { ApiError } from "@/lib/client/api-fetch";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { subscriptionInputSchema } from "@/lib/digests/schemas";
import type { SendNowAnswer } from "@/lib/digests/answers";
import type { DeliveryView } from "@/lib/digests/queries";
import type { DigestCadence, DigestEmptyPolicy, DigestScope, DigestThreshold } from "@/models/digest-types";
import { digestKeys, ownDigestQuery, previewQuery, saveSubscription, sendNow, subscribersQuery } from "./query-options";

const CADENCE_LABELS: Record<DigestCadence, string> = { after_run: "After each completed run", weekly: "Weekly (Mondays)", monthly: "Monthly (the 1st)" };
const THRESHOLD_LABELS: Record<DigestThreshold, string> = { every_change: "Every change", class_changes: "Only changes in significance class" };
const EMPTY_LABELS: Record<DigestEmptyPolicy, string> = { skip: "Send nothing", say_so: "Send a short “nothing changed”" };

type Form = { cadence: DigestCadence; scope: DigestScope; indicatorCodes: string[]; threshold: DigestThreshold; emptyPolicy: DigestEmptyPolicy; active: boolean };
const DEFAULT_FORM: Form = { cadence: "after_run", scope: "all", indicatorCodes: [], threshold: "every_change", emptyPolicy: "skip", active: true };

function pick(s: Form): Form {
  return { cadence: s.cadence, scope: s.scope, indicatorCodes: s.indicatorCodes, threshold: s.threshold, emptyPolicy: s.emptyPolicy, active: s.active };
}

function fmt(iso: string | null): string {
  return iso ? new Date(iso).toLocaleString("en-GB", { dateStyle: "medium", timeStyle: "short" }) : "—";
}

/** What a delivery covers: why it was made (its idempotency key: "sub-7:run-12", "sub-7:manual-<iso>", "sub-7:weekly-…") and the run it reported. */
function covers(d: DeliveryView): string {
  const period = d.idempotencyKey.slice(d.idempotencyKey.indexOf(":") + 1);
  const occasion = period.startsWith("manual-") ? "on request" : period.startsWith("run-") ? "after a run" : period;
  const run = d.coveredRunId ?? d.runId;
  return d.runLabel ? `${occasion} · ${d.runLabel}` : run ? `${occasion} · run id ${run}` : occasion;
}

const STATUS_LABELS: Record<DeliveryView["status"], string> = { queued: "queued", sending: "sending", sent: "sent", skipped: "skipped", failed: "failed" };

/** The history's last column: why a digest was skipped, what failed, or the subject of one sent. */
function deliveryNote(d: DeliveryView): string {
  if (d.status === "skipped") return d.skippedReason ?? "";
  if (d.status === "failed") return d.error ? `${d.error} Tessera tries again.` : "";
  return typeof d.summary?.subject === "string" ? d.summary.subject : "";
}

/**
 * What became of "Send me this digest now": the answer's sentence, then,
 * for a queued digest, what its delivery row says once the job is done.
 */
function SendOutcome({ answer, error, deliveries }: { answer: SendNowAnswer | null; error: Error | null; deliveries: DeliveryView[] }) {
  if (error) return <p role="alert" className="text-sm text-red-800">{error instanceof ApiError ? error.message : "Sending did not work. Try again."}</p>;
  if (!answer) return null;
  const row = deliveries.find((d) => d.idempotencyKey === answer.idempotencyKey);
  const followUp =
    answer.status === "queued" || answer.status === "retrying"
      ? row?.status === "sent"
        ? `Sent ${fmt(row.sentAt)}.`
        : row?.status === "skipped"
          ? `In the end nothing was sent: ${row.skippedReason ?? ""}`
          : row?.status === "failed"
            ? `Not sent yet: ${row.error ?? "the mail server refused"}. Tessera tries again.`
            : null
      : null;
  return (
    <p role="status" className={`text-sm ${answer.status === "skipped" ? "text-ink-700" : "text-ink-500"}`} data-testid="digest-send-outcome" data-status={answer.status}>
      {answer.sentence}
      {followUp ? ` ${followUp}` : ""}
    </p>
  );
}

export function DigestsScreen({ slug }: { slug: string }) {
  const client = useQueryClient();
  const own = useQuery(ownDigestQuery(slug));
  // The form shows the saved subscription until the member edits it.
  const [edited, setForm] = useState<Form | null>(null);
  const [fieldError, setFieldError] = useState<string | null>(null);
  const subscription = own.data?.subscription ?? null;
  const form: Form = edited ?? (subscription ? pick(subscription) : DEFAULT_FORM);

  const preview = useQuery(previewQuery(slug, subscription !== null));
  const subscribers = useQuery(subscribersQuery(slug, own.data?.canSeeSubscribers === true));

  const save = useMutation({
    mutationFn: (body: Form) => saveSubscription(slug, body),
    onSuccess: () => client.invalidateQueries({ queryKey: digestKeys.all(slug) }),
  });
  // Both the history and the preview change after a send (a sent digest becomes the next one's baseline).
  const send = useMutation({ mutationFn: () => sendNow(slug), onSuccess: () => client.invalidateQueries({ queryKey: digestKeys.all(slug) }) });

  function submit(event: React.FormEvent) {
    event.preventDefault();
    // The button stays focusable while saving (aria-disabled), so a second Enter is ignored here.
    if (save.isPending) return;
    const parsed = subscriptionInputSchema.safeParse(form);
    if (!parsed.success) {
      setFieldError(parsed.error.issues[0]?.message ?? "Check the form.");
      return;
    }
    setFieldError(null);
    save.mutate(parsed.data);
  }

  if (own.isPending) return <p className="text-ink-500">Loading your digest settings…</p>;
  if (own.isError) return <p role="alert" className="text-red-800">{own.error.message}</p>;
  const { indicators, deliveries } = own.data;
  const labelOf = new Map(indicators.map((i) => [i.code, i.label]));
  const saveError = save.error instanceof ApiError ? save.error.message : save.error ? "Saving did not work. Try again." : null;

  return (
    <div className="grid gap-10">
      <section aria-labelledby="own-subscription">
        <h2 id="own-subscription" className="text-lg font-semibold text-ink">Your subscription</h2>
        <p className="mt-1 text-sm text-ink-500">
          {subscription
            ? subscription.active
              ? `Active. ${subscription.lastDigestAt ? `Last digest: ${fmt(subscription.lastDigestAt)}.` : "No digest sent yet."}`
              : `Unsubscribed ${fmt(subscription.unsubscribedAt)}. Save with “Receive digests” ticked to subscribe again.`
            : "You do not receive digests from this workspace yet."}
        </p>
        <form onSubmit={submit} className="mt-4 grid max-w-2xl gap-5" aria-label="Digest subscription">
          <fieldset>
            <legend className={labelClass}>When</legend>
            <div className="mt-2 grid gap-1">
              {(Object.keys(CADENCE_LABELS) as DigestCadence[]).map((c) => (
                <label key={c} className="flex items-center gap-2 text-sm text-ink">
                  <input type="radio" className="accent-ochre-500" name="cadence" value={c} checked={form.cadence === c} onChange={() => setForm({ ...form, cadence: c })} />
                  {CADENCE_LABELS[c]}
                </label>
              ))}
            </div>
          </fieldset>
          <fieldset>
            <legend className={labelClass}>Indicators</legend>
            <div className="mt-2 grid gap-1">
              <label className="flex items-center gap-2 text-sm text-ink">
                <input type="radio" className="accent-ochre-500" name="scope" value="all" checked={form.scope === "all"} onChange={() => setForm({ ...form, scope: "all" })} />
                All indicators
              </label>
              <label className="flex items-center gap-2 text-sm text-ink">
                <input type="radio" className="accent-ochre-500" name="scope" value="chosen" checked={form.scope === "chosen"} onChange={() => setForm({ ...form, scope: "chosen" })} />
                Only the ones I choose
              </label>
            </div>
            {form.scope === "chosen" ? (
              <div className="mt-2 grid max-h-56 gap-1 overflow-auto rounded-md border border-ink-100 p-3 sm:grid-cols-2">
                {indicators.length === 0 ? <p className="text-sm text-ink-500">No indicators in this workspace yet.</p> : null}
                {indicators.map((i) => (
                  <label key={i.code} className="flex items-center gap-2 text-sm text-ink">
                    <input
                      type="checkbox"
                      className="accent-ochre-500"
                      name="indicator"
                      value={i.code}
                      checked={form.indicatorCodes.includes(i.code)}
                      onChange={(e) =>
                        setForm({ ...form, indicatorCodes: e.target.checked ? [...form.indicatorCodes, i.code] : form.indicatorCodes.filter((c) => c !== i.code) })
                      }
                    />
                    {i.label}
                  </label>
                ))}
              </div>
            ) : null}
          </fieldset>
          <div className="grid gap-4 sm:grid-cols-2">
            <label className={labelClass}>
              What counts as news
              <select className={`${inputClass} mt-1`} name="threshold" value={form.threshold} onChange={(e) => setForm({ ...form, threshold: e.target.value as DigestThreshold })}>
                {(Object.keys(THRESHOLD_LABELS) as DigestThreshold[]).map((t) => (
                  <option key={t} value={t}>{THRESHOLD_LABELS[t]}</option>
                ))}
              </select>
            </label>
            <label className={labelClass}>
              When nothing changed
              <select className={`${inputClass} mt-1`} name="emptyPolicy" value={form.emptyPolicy} onChange={(e) => setForm({ ...form, emptyPolicy: e.target.value as DigestEmptyPolicy })}>
                {(Object.keys(EMPTY_LABELS) as DigestEmptyPolicy[]).map((t) => (
                  <option key={t} value={t}>{EMPTY_LABELS[t]}</option>
                ))}
              </select>
            </label>
          </div>
          <label className="flex items-center gap-2 text-sm text-ink">
            <input type="checkbox" className="accent-ochre-500" name="active" checked={form.active} onChange={(e) => setForm({ ...form, active: e.target.checked })} />
            Receive digests
          </label>
          {fieldError || saveError ? <p role="alert" className="text-sm text-red-800">{fieldError ?? saveError}</p> : null}
          <div className="flex flex-wrap gap-3">
            <button type="submit" className={primaryButton} aria-disabled={save.isPending}>{save.isPending ? "Saving…" : "Save subscription"}</button>
            {subscription?.active ? (
              <button type="button" className={secondaryButton} disabled={send.isPending} onClick={() => send.mutate()}>
                Send me this digest now
              </button>
            ) : null}
            <span role="status" aria-live="polite" className="self-center text-sm text-ink-500">
              {save.isSuccess ? "Saved." : ""}
            </span>
          </div>
          <div aria-live="polite" data-testid="digest-send-live">
            <SendOutcome answer={send.data ?? null} error={send.error} deliveries={deliveries} />
          </div>
        </form>
      </section>

      {subscription ? (
        <section aria-labelledby="preview">
          <h2 id="preview" className="text-lg font-semibold text-ink">What “Send me this digest now” would send</h2>
          {preview.isPending ? <p className="text-sm text-ink-500">Composing…</p> : null}
          {preview.isError ? <p role="alert" className="text-sm text-red-800">{preview.error.message}</p> : null}
          {preview.data ? (
            <div className="mt-2">
              <p
                role="status"
                className={`max-w-3xl text-sm ${preview.data.decision.send ? "text-ink-700" : "rounded-md border border-dashed border-ink-200 p-4 text-ink-600"}`}
                data-testid={preview.data.decision.send ? "digest-preview-decision" : "digest-preview-skipped"}
              >
                {preview.data.decision.sentence}
                {!preview.data.decision.send && preview.data.empty && subscription.emptyPolicy === "skip"
                  ? " Choose “Send a short ‘nothing changed’” to receive one anyway."
                  : ""}
              </p>
              {edited ? <p className="mt-1 text-xs text-ink-500">The preview follows your saved settings; save to see the edited ones.</p> : null}
              {preview.data.html ? (
                <>
                  <p className="mt-3 text-sm text-ink-700">
                    <span className="font-medium">Subject:</span> {preview.data.subject}
                    {preview.data.decision.send ? "" : " (not sent)"}
                  </p>
                  {/* sandbox without allow-scripts: the mail's HTML cannot run anything or reach this page. */}
                  <iframe title="Digest preview" sandbox="" srcDoc={preview.data.html} className="mt-2 h-[560px] w-full max-w-3xl rounded-md border border-ink-100 bg-white" />
                </>
              ) : null}
            </div>
          ) : null}
        </section>
      ) : null}

      {subscription ? (
        <section aria-labelledby="history">
          <h2 id="history" className="text-lg font-semibold text-ink">Delivery history</h2>
          {deliveries.length === 0 ? (
            <p className="mt-1 text-sm text-ink-500">No digests yet.</p>
          ) : (
            <table className="mt-2 w-full max-w-4xl text-left text-sm">
              <thead className="text-ink-500">
                <tr><th className="py-1 pr-3">Created</th><th className="pr-3">Covers</th><th className="pr-3">Outcome</th><th className="pr-3">Attempts</th><th className="pr-3">Sent</th><th>Why, or what</th></tr>
              </thead>
              <tbody>
                {deliveries.map((d) => (
                  <tr key={d.id} className="border-t border-ink-100 align-top" data-testid="digest-delivery" data-status={d.status}>
                    <td className="py-1 pr-3">{fmt(d.createdAt)}</td>
                    <td className="pr-3">{covers(d)}</td>
                    <td className="pr-3 font-medium">{STATUS_LABELS[d.status]}</td>
                    <td className="pr-3">{d.attempts}</td>
                    <td className="pr-3">{fmt(d.sentAt)}</td>
                    <td className={d.status === "failed" ? "text-red-800" : "text-ink-500"}>{deliveryNote(d)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
        </section>
      ) : null}

      {own.data.canSeeSubscribers ? (
        <section aria-labelledby="subscribers">
          <h2 id="subscribers" className="text-lg font-semibold text-ink">Who subscribes in this workspace</h2>
          {subscribers.isError ? <p role="alert" className="text-sm text-red-800">{subscribers.error.message}</p> : null}
          {subscribers.data?.length === 0 ? <p className="mt-1 text-sm text-ink-500">Nobody subscribes yet.</p> : null}
          {subscribers.data?.length ? (
            <table className="mt-2 w-full max-w-4xl text-left text-sm">
              <thead className="text-ink-500">
                <tr><th className="py-1 pr-3">Member</th><th className="pr-3">Role</th><th className="pr-3">When</th><th className="pr-3">Indicators</th><th className="pr-3">Threshold</th><th>Status</th></tr>
              </thead>
              <tbody>
                {subscribers.data.map((s) => (
                  <tr key={s.email} className="border-t border-ink-100 align-top">
                    <td className="py-1 pr-3">{s.name} <span className="text-ink-500">{s.email}</span></td>
                    <td className="pr-3 capitalize">{s.role}</td>
                    <td className="pr-3">{CADENCE_LABELS[s.cadence]}</td>
                    <td className="pr-3">{s.scope === "all" ? "All" : s.indicatorCodes.map((c) => labelOf.get(c) ?? c).join(", ")}</td>
                    <td className="pr-3">{THRESHOLD_LABELS[s.threshold]}</td>
                    <td>{s.active ? "active" : "unsubscribed"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          ) : null}
        </section>
      ) : null}
    </div>
  );
}
