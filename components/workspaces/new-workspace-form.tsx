"use client";

import { useMutation } from "@tanstack/react-query";
import { useRouter } from "next/navigation";
import { useState } from "react";
import { inputClass, labelClass, primaryButton } from "@/components/ui/button-styles";
import { ApiError, apiFetch } from "@/lib/client/api-fetch";
import { createWorkspaceSchema, suggestSlug, type CreateWorkspaceInput } from "@/lib/workspaces/schemas";

type FieldError = { field: string | null; message: string };

export function NewWorkspaceForm() {
  const router = useRouter();
  const [name, setName] = useState("");
  const [slug, setSlug] = useState("");
  // The address follows the name until the user edits it themselves.
  const [slugEdited, setSlugEdited] = useState(false);
  const [error, setError] = useState<FieldError | null>(null);

  const create = useMutation({
    mutationFn: (input: CreateWorkspaceInput) =>
      apiFetch<{ slug: string; name: string }>("/api/workspaces", { method: "POST", body: JSON.stringify(input) }),
    onSuccess: (created) => router.push(`/w/${created.slug}/desk`),
    onError: (e: Error) => setError({ field: e instanceof ApiError ? (e.status === 409 ? "slug" : e.field) : null, message: e.message }),
  });

  function onSubmit(event: React.FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const parsed = createWorkspaceSchema.safeParse({ name, slug });
    if (!parsed.success) {
      const issue = parsed.error.issues[0];
      setError({ field: String(issue?.path[0] ?? ""), message: issue?.message ?? "Check the form." });
      return;
    }
    setError(null);
    create.mutate(parsed.data);
  }

  return (
    <form onSubmit={onSubmit} noValidate className="space-y-5" aria-label="New workspace">
      <div>
        <label htmlFor="workspace-name" className={labelClass}>
          Name
        </label>
        <input
          id="workspace-name"
          name="name"
          value={name}
          maxLength={120}
          onChange={(e) => {
            setName(e.target.value);
            if (!slugEdited) setSlug(suggestSlug(e.target.value));
          }}
          className={`${inputClass} mt-1`}
          placeholder="Regional Statistics Office"
          aria-invalid={error?.field === "name"}
          aria-describedby={error?.field === "name" ? "workspace-name-error" : undefined}
        />
        {error?.field === "name" ? (
          <p id="workspace-name-error" className="mt-1 text-sm text-red-700">
            {error.message}
          </p>
        ) : null}
      </div>
      <div>
        <label htmlFor="workspace-slug" className={labelClass}>
          Address
        </label>
        <div className="mt-1 flex items-center gap-1 text-sm text-ink-500">
          <span aria-hidden="true">/w/</span>
          <input
            id="workspace-slug"
            name="slug"
            value={slug}
            maxLength={40}
            onChange={(e) => {
              setSlug(e.target.value);
              setSlugEdited(true);
            }}
            className={inputClass}
            placeholder="regional-statistics"
            aria-invalid={error?.field === "slug"}
            aria-describedby="workspace-slug-help"
          />
        </div>
        <p id="workspace-slug-help" className={`mt-1 text-sm ${error?.field === "slug" ? "text-red-700" : "text-ink-400"}`}>
          {error?.field === "slug" ? error.message : "3–40 lowercase letters, digits and hyphens. It cannot be changed later."}
        </p>
      </div>
      {error && error.field !== "name" && error.field !== "slug" ? (
        <p role="alert" className="rounded-md border border-red-200 bg-red-50 px-3 py-2 text-sm text-red-800">
          {error.message}
        </p>
      ) : null}
      <button type="submit" disabled={create.isPending || create.isSuccess} className={primaryButton}>
        {create.isPending || create.isSuccess ? "Creating…" : "Create workspace"}
      </button>
    </form>
  );
}
