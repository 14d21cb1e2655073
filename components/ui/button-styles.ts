// Shared class strings, so buttons look the same whether they are <button> or <Link>.
export const primaryButton =
  "inline-flex items-center justify-center gap-2 rounded-md bg-ochre-700 px-4 py-2 text-sm font-semibold text-white shadow-sm transition hover:bg-ochre-800 disabled:cursor-not-allowed disabled:opacity-60 aria-disabled:cursor-not-allowed aria-disabled:opacity-60";
export const secondaryButton =
  "inline-flex items-center justify-center gap-2 rounded-md border border-ink-200 bg-white px-3 py-1.5 text-sm font-medium text-ink shadow-sm transition hover:bg-ink-50 disabled:cursor-not-allowed disabled:opacity-60";
export const dangerButton =
  "inline-flex items-center justify-center gap-2 rounded-md border border-red-200 bg-white px-3 py-1.5 text-sm font-medium text-red-800 transition hover:bg-red-50 disabled:cursor-not-allowed disabled:opacity-60";
export const inputClass =
  "block w-full rounded-md border border-ink-200 bg-white px-3 py-2 text-sm text-ink shadow-sm placeholder:text-ink-300 focus:border-ochre-500 focus:outline-none focus:ring-2 focus:ring-ochre-200";
export const labelClass = "block text-sm font-medium text-ink-700";
