"use client";

import { useEffect } from "react";
import { primaryButton } from "@/components/ui/button-styles";
import { UNAVAILABLE_MESSAGES, UNAVAILABLE_TITLES, unavailableService } from "@/lib/service-unavailable";

export default function WorkspaceError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  useEffect(() => {
    console.error(error);
  }, [error]);
  const outage = unavailableService(error.digest);
  return (
    <div role="alert" className="mx-auto mt-12 max-w-lg rounded-lg border border-red-200 bg-white p-8 text-center">
      <h1 className="text-xl font-semibold text-ink">{outage ? UNAVAILABLE_TITLES[outage] : "This screen could not be loaded"}</h1>
      <p className="mt-2 text-sm text-ink-500">
        {outage
          ? UNAVAILABLE_MESSAGES[outage]
          : `Something went wrong on our side. Try again; if it keeps happening, tell your manager${error.digest ? ` and quote reference ${error.digest}` : ""}.`}
      </p>
      <button type="button" onClick={reset} className={`${primaryButton} mt-6`}>
        Try again
      </button>
    </div>
  );
}
