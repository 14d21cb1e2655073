import Link from "next/link";

export function Forbidden({ message, backHref }: { message: string; backHref: string }) {
  return (
    <div role="alert" className="mx-auto mt-12 max-w-lg rounded-lg border border-ink-100 bg-white p-8 text-center shadow-sm">
      <p className="text-xs font-semibold uppercase tracking-wider text-ochre-700">Not available to your role</p>
      <h1 className="mt-2 text-xl font-semibold text-ink">You do not have access to this screen</h1>
      <p className="mt-3 text-sm text-ink-500">{message}</p>
      <Link href={backHref} className="mt-6 inline-block rounded-md bg-ink px-4 py-2 text-sm font-semibold text-white hover:bg-ink-700">
        Back to the Desk
      </Link>
    </div>
  );
}
