"use client";

import Link from "next/link";
import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import { useState } from "react";
import { apiFetch } from "@/lib/client/api-fetch";
import { inputClass, labelClass, primaryButton, secondaryButton } from "@/components/ui/button-styles";
import { Notice, Panel, formatDate } from "@/components/intake/format";
import { intakeBase, overviewQuery } from "@/components/intake/query-options";
import { putWithProgress, sha256OfFile } from "@/components/intake/upload-file";
import type { CrosswalkListItem } from "@/lib/reforms/service";
import type { UploadTicket, UploadView } from "@/lib/intake/service";

const reformKeys = { list: (slug: string) => ["reforms", slug, "list"] as const };

/** The Reforms screen under Intake: crosswalks between boundary versions, a derive form and a crosswalk CSV upload. */
export function ReformsScreen({ slug }: { slug: string }) {
  const client = useQueryClient();
  const list = useQuery({ queryKey: reformKeys.list(slug), queryFn: () => apiFetch<{ crosswalks: CrosswalkListItem[] }>(`${intakeBase(slug)}/crosswalks`) });
  const overview = useQuery(overviewQuery(slug));
  const versions = (overview.data?.boundarySets ?? []).flatMap((set) =>
    set.versions.filter((v) => v.state === "validated" || v.state === "published").map((v) => ({ id: v.id, label: `${set.name} v${v.version} (${v.state})` })),
  );
  const [from, setFrom] = useState("");
  const [to, setTo] = useState("");
  const [file, setFile] = useState<File | null>(null);
  const [message, setMessage] = useState<{ tone: "error" | "success"; text: string } | null>(null);
  const create = useMutation({
    mutationFn: async () => {
      const body: Record<string, unknown> = { fromBoundaryVersionId: Number(from), toBoundaryVersionId: Number(to) };
      if (file) {
        const ticket = await apiFetch<UploadTicket>(`${intakeBase(slug)}/uploads`, {
          method: "POST",
          body: JSON.stringify({ kind: "crosswalk", fileName: file.name, size: file.size, sha256: await sha256OfFile(file) }),
        });
        await putWithProgress(ticket.url, file, ticket.contentType, () => undefined);
        const checked = await apiFetch<UploadView>(`${intakeBase(slug)}/uploads/${ticket.uploadId}/complete`, { method: "POST" });
        if (checked.state !== "received") throw new Error(checked.error ?? "the upload failed");
        body.uploadId = ticket.uploadId;
      }
      return apiFetch<{ id: number; status: string }>(`${intakeBase(slug)}/crosswalks`, { method: "POST", body: JSON.stringify(body) });
    },
    onSuccess: (created) => {
      setMessage({ tone: created.status === "rejected" ? "error" : "success", text: `Crosswalk ${created.id} is ${created.status}.` });
      void client.invalidateQueries({ queryKey: reformKeys.list(slug) });
    },
    onError: (error: Error) => setMessage({ tone: "error", text: error.message }),
  });

  return (
    <div className="space-y-6">
      <Panel
        title="New crosswalk"
        caption="Choose the boundaries the panel is on (from) and the boundaries to carry it onto (to). Without a file, Tessera derives shares from the overlap of areas; with a from,to,share CSV (for example population-weighted shares from a statistics office) it checks and stores yours."
      >
        <div className="flex flex-wrap items-end gap-4">
          <BoundaryVersionChoice label="From boundaries" versions={versions} value={from} onChange={setFrom} testId="crosswalk-from" />
          <BoundaryVersionChoice label="To boundaries" versions={versions} value={to} onChange={setTo} testId="crosswalk-to" />
          <label className={labelClass}>
            Crosswalk CSV (optional)
            <input className="mt-1 block text-sm" type="file" accept=".csv,.tsv,.txt,text/csv" onChange={(e) => setFile(e.target.files?.[0] ?? null)} data-testid="crosswalk-file" />
          </label>
          <button type="button" className={primaryButton} disabled={!from || !to || from === to || create.isPending} onClick={() => create.mutate()} data-testid="crosswalk-create">
            {create.isPending ? "Working…" : file ? "Upload and check" : "Derive by area"}
          </button>
        </div>
        {message ? (
          <div className="mt-3">
            <Notice tone={message.tone}>{message.text}</Notice>
          </div>
        ) : null}
      </Panel>
      <Panel title="Crosswalks">
        {list.error ? <Notice tone="error">{list.error.message}</Notice> : null}
        {list.data && list.data.crosswalks.length === 0 ? <p className="text-sm text-ink-500">No crosswalks yet.</p> : null}
        <ul className="divide-y divide-ink-100" data-testid="crosswalk-list">
          {(list.data?.crosswalks ?? []).map((c) => (
            <li key={c.id} className="flex flex-wrap items-center justify-between gap-2 py-2 text-sm">
              <Link className="font-medium text-ink underline-offset-2 hover:underline" href={`/w/${slug}/intake/reforms/${c.id}`}>
                Crosswalk {c.id}: {c.from.setName} v{c.from.version} → {c.to.setName} v{c.to.version}
              </Link>
              <span className="text-ink-500">
                {c.origin === "derived" ? "derived by area" : `uploaded ${c.fileName ?? ""}`} · {c.status} · {c.pairCount ?? 0} pairs · {formatDate(c.createdAt)}
              </span>
            </li>
          ))}
        </ul>
        <Link className={`${secondaryButton} mt-4 inline-block`} href={`/w/${slug}/intake`}>
          Back to Intake
        </Link>
      </Panel>
    </div>
  );
}

/** One boundary version of the workspace, for either end of a crosswalk. */
function BoundaryVersionChoice({
  label,
  versions,
  value,
  onChange,
  testId,
}: {
  label: string;
  versions: readonly { id: number; label: string }[];
  value: string;
  onChange: (value: string) => void;
  testId: string;
}) {
  return (
    <label className={labelClass}>
      {label}
      <select className={`${inputClass} mt-1`} value={value} onChange={(e) => onChange(e.target.value)} data-testid={testId}>
        <option value="">Choose…</option>
        {versions.map((v) => (
          <option key={v.id} value={v.id}>
            {v.label}
          </option>
        ))}
      </select>
    </label>
  );
}
