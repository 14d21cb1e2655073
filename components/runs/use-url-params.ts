"use client";

import { usePathname, useRouter, useSearchParams } from "next/navigation";

/**
 * The screen's filters live in the URL (shareable, survive reloads). `setParams`
 * replaces the given keys; null or "" removes a key.
 */
export function useUrlParams() {
  const router = useRouter();
  const pathname = usePathname();
  const params = useSearchParams();
  const setParams = (changes: Record<string, string | null>) => {
    const next = new URLSearchParams(params.toString());
    for (const [k, v] of Object.entries(changes)) {
      if (v === null || v === "") next.delete(k);
      else next.set(k, v);
    }
    router.replace(`${pathname}?${next.toString()}`, { scroll: false });
  };
  return { params, setParams, router };
}
