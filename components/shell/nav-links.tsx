"use client";

import Link from "next/link";
import { usePathname } from "next/navigation";
import type { NavItem } from "@/lib/team/queries";

export function NavLinks({ items }: { items: NavItem[] }) {
  const pathname = usePathname();
  return (
    <nav aria-label="Workspace" className="flex gap-1 overflow-x-auto">
      {items.map((item) => {
        const active = pathname === item.href || pathname.startsWith(`${item.href}/`);
        return (
          <Link
            key={item.key}
            href={item.href}
            aria-current={active ? "page" : undefined}
            className={`relative whitespace-nowrap px-3 py-3 text-sm font-medium transition ${
              active ? "text-white" : "text-ink-200 hover:text-white"
            }`}
          >
            {item.label}
            {active ? <span className="absolute inset-x-3 bottom-0 h-0.5 rounded-full bg-ochre-400" aria-hidden="true" /> : null}
          </Link>
        );
      })}
    </nav>
  );
}
