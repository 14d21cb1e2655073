import { PageHeader } from "./page-header";

// An honest placeholder for screens that later releases build: it says what
// the screen will do and shows no invented numbers.
export function LaterRelease({ title, purpose, features }: { title: string; purpose: string; features: string[] }) {
  return (
    <div>
      <PageHeader title={title} eyebrow="Arrives with a later release">
        {purpose}
      </PageHeader>
      <section className="max-w-2xl rounded-lg border border-dashed border-ink-200 bg-white p-6">
        <h2 className="text-sm font-semibold text-ink">What this screen will hold</h2>
        <ul className="mt-3 space-y-2 text-sm text-ink-600">
          {features.map((f) => (
            <li key={f} className="flex gap-2">
              <span className="mt-1.5 h-1.5 w-1.5 shrink-0 rounded-sm bg-ochre" aria-hidden="true" />
              {f}
            </li>
          ))}
        </ul>
        <p className="mt-5 text-sm text-ink-400">
          Nothing is shown here yet because there is nothing real to show. This screen arrives with a later release.
        </p>
      </section>
    </div>
  );
}
