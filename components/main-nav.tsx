"use client";
import Link from "next/link";
import { usePathname } from "next/navigation";
import type { NavItem } from "./nav";

export function MainNav({ items }: { items: NavItem[] }) {
  const path = usePathname();
  return (
    <nav aria-label="Main" className="flex flex-wrap gap-1">
      {items.map((item) => {
        const active = item.href === "/" ? path === "/" : path.startsWith(item.href);
        return (
          <Link
            key={item.href}
            href={item.href}
            aria-current={active ? "page" : undefined}
            className={`rounded-md px-3 py-2 text-sm font-bold ${active ? "bg-estuary-50 text-estuary-900" : "text-estuary-50 hover:bg-estuary-700"}`}
          >
            {item.label}
          </Link>
        );
      })}
    </nav>
  );
}
