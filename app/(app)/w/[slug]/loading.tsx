export default function Loading() {
  return (
    <div className="animate-pulse" aria-busy="true" aria-label="Loading">
      <div className="h-4 w-24 rounded bg-ink-100" />
      <div className="mt-3 h-7 w-72 rounded bg-ink-100" />
      <div className="mt-8 grid gap-4 sm:grid-cols-3">
        <div className="h-24 rounded-lg bg-ink-50" />
        <div className="h-24 rounded-lg bg-ink-50" />
        <div className="h-24 rounded-lg bg-ink-50" />
      </div>
    </div>
  );
}
