export default function Loading() {
  return <div className="mx-auto mt-24 h-2 w-40 animate-pulse rounded bg-ink-100" aria-busy="true" aria-label="Loading" />;
}
