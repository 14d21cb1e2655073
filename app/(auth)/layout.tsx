import { Wordmark } from "@/components/ui/logo";

// Decorative mosaic: a fixed, hand-picked pattern of tile shades (not data).
const TILES = [
  3, 1, 0, 2, 1, 0, 0, 1, 2, 3, 3, 1, 0, 0, 1, 2, 2, 3, 3, 1, 0, 1, 2, 2, 3, 2, 1, 0, 0, 1, 1, 0, 2, 3, 1, 0, 0, 0, 1, 2,
  1, 1, 0, 0, 2, 3, 2, 1, 0, 2,
];
const SHADES = ["bg-ink-700", "bg-ink-600", "bg-ochre-700", "bg-ochre-500"];

export default function AuthLayout({ children }: { children: React.ReactNode }) {
  return (
    <div className="grid min-h-screen lg:grid-cols-[minmax(0,5fr)_minmax(0,6fr)]">
      <aside className="relative hidden overflow-hidden bg-ink p-12 text-white lg:flex lg:flex-col">
        <div className="absolute inset-x-0 top-0 h-1 bg-ochre-500" aria-hidden="true" />
        <Wordmark className="text-xl" />
        <div className="mt-auto max-w-md">
          <div className="mb-10 grid w-64 grid-cols-10 gap-1" aria-hidden="true">
            {TILES.map((shade, i) => (
              <span key={i} className={`aspect-square rounded-[2px] ${SHADES[shade]}`} />
            ))}
          </div>
          <h2 className="text-3xl font-semibold leading-tight">Where regions cluster, and how that changes.</h2>
          <p className="mt-4 text-ink-200">
            One curated home for your team&apos;s regional indicator panels and boundaries, with spatial clustering measured
            for every period and followed over the years.
          </p>
        </div>
        <p className="mt-12 text-xs text-ink-300">Tessera · a data room for regional economists</p>
      </aside>
      <main id="main-content" tabIndex={-1} className="flex items-center justify-center px-6 py-12">
        <div className="w-full max-w-sm">
          <div className="mb-8 text-ink lg:hidden">
            <Wordmark className="text-xl" />
          </div>
          {children}
        </div>
      </main>
    </div>
  );
}
