"use client";

import { UNAVAILABLE_MESSAGES, UNAVAILABLE_TITLES, unavailableService } from "@/lib/service-unavailable";

export default function RootError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  const outage = unavailableService(error.digest);
  return (
    <main id="main-content" tabIndex={-1} role="alert" className="mx-auto mt-24 max-w-lg rounded-lg border border-red-200 bg-white p-8 text-center">
      <h1 className="text-xl font-semibold text-ink">{outage ? UNAVAILABLE_TITLES[outage] : "Tessera could not load this page"}</h1>
      <p className="mt-2 text-sm text-ink-500">
        {outage ? UNAVAILABLE_MESSAGES[outage] : `Something went wrong on our side. Try again in a moment${error.digest ? ` (reference ${error.digest})` : ""}.`}
      </p>
      <button type="button" onClick={reset} className="mt-6 rounded-md bg-ink px-4 py-2 text-sm font-semibold text-white">
        Try again
      </button>
    </main>
  );
}
