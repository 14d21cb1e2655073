import Link from "next/link";
import { Wordmark } from "@/components/ui/logo";

export default function NotFound() {
  return (
    <main id="main-content" tabIndex={-1} className="mx-auto mt-24 max-w-lg rounded-lg border border-ink-100 bg-white p-8 text-center shadow-sm">
      <div className="text-ink">
        <Wordmark />
      </div>
      <h1 className="mt-6 text-xl font-semibold text-ink">There is nothing here for you</h1>
      <p className="mt-2 text-sm text-ink-500">There is no such workspace or page, or you are not a member of it.</p>
      <Link href="/" className="mt-6 inline-block text-sm font-semibold text-ochre-700 hover:underline">
        Go to your workspace
      </Link>
    </main>
  );
}
