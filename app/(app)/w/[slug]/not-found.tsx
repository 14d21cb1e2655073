import Link from "next/link";

export default function WorkspaceNotFound() {
  return (
    <div className="mx-auto mt-12 max-w-lg rounded-lg border border-ink-100 bg-white p-8 text-center">
      <p className="text-xs font-semibold uppercase tracking-wider text-ochre-700">Not found</p>
      <h1 className="mt-2 text-xl font-semibold text-ink">There is nothing here for you</h1>
      <p className="mt-2 text-sm text-ink-500">There is no such workspace or page, or you are not a member of it.</p>
      <Link href="/" className="mt-6 inline-block text-sm font-semibold text-ochre-700 hover:underline">
        Go to your workspace
      </Link>
    </div>
  );
}
