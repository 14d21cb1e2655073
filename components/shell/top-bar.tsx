import Link from "next/link";
import { Wordmark } from "@/components/ui/logo";
import { ROLE_LABELS, type Role } from "@/lib/auth/roles";
import type { NavItem } from "@/lib/team/queries";
import { NavLinks } from "./nav-links";
import { SignOutButton } from "./sign-out-button";
import { WorkspaceSwitcher } from "./workspace-switcher";

export function TopBar(props: {
  slug: string;
  nav: NavItem[];
  role: Role;
  userName: string;
  workspaces: { slug: string; name: string; role: Role }[];
}) {
  return (
    <header className="bg-ink text-white shadow-sm print:hidden">
      <div className="h-1 bg-ochre-500" aria-hidden="true" />
      <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-6 pt-3">
        <Link href={`/w/${props.slug}/desk`} className="text-white">
          <Wordmark className="text-lg" />
        </Link>
        <WorkspaceSwitcher current={props.slug} workspaces={props.workspaces} />
        <Link href="/workspaces/new" className="text-sm text-ink-200 hover:text-white hover:underline" data-testid="new-workspace-link">
          New workspace
        </Link>
        <Link href="/api-reference" className="text-sm text-ink-200 hover:text-white hover:underline" data-testid="api-reference-link">
          API reference
        </Link>
        <div className="ml-auto flex items-center gap-4">
          <div className="text-right leading-tight">
            <Link href="/account" className="text-sm font-medium text-white hover:text-ochre-300" title="Your account: password and access tokens">
              <p data-testid="user-name">{props.userName}</p>
            </Link>
            <p className="text-xs text-ochre-300" data-testid="user-role">
              {ROLE_LABELS[props.role]}
            </p>
          </div>
          <SignOutButton />
        </div>
      </div>
      <div className="mx-auto max-w-7xl px-3">
        <NavLinks items={props.nav} />
      </div>
    </header>
  );
}
