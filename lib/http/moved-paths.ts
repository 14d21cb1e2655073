// API paths that moved, and where they answer now. Pure (no next or
// environment imports) so a unit test holds every rule; proxy.ts answers the
// old path with a 308 (method and body preserved) carrying every security
// header.
//
// Every workspace-scoped API lives under /api/w/<slug>/. The audit, intake,
// invitations and members routes used to live under /api/workspaces/<slug>/;
// their old paths redirect for one release and are then removed.
// POST /api/workspaces (create a workspace) is not workspace-scoped and stays.

/** The resources that moved from /api/workspaces/<slug>/ to /api/w/<slug>/. */
export const MOVED_WORKSPACE_RESOURCES = ["audit", "intake", "invitations", "members"] as const;

const OLD_WORKSPACE_PATH = new RegExp(`^/api/workspaces/([^/\\\\]+)/(${MOVED_WORKSPACE_RESOURCES.join("|")})(/.*)?$`);

/**
 * Where an old workspace API path answers now (`/api/workspaces/veldmark/intake/uploads`
 * → `/api/w/veldmark/intake/uploads`), or null for any other path. The slug
 * and the rest of the path are kept as they came (still percent-encoded); the
 * target always starts with `/api/w/`, so it can never read as another host.
 */
export function movedApiPath(pathname: string): string | null {
  const match = OLD_WORKSPACE_PATH.exec(pathname);
  if (!match) return null;
  const [, slug, resource, rest] = match;
  return `/api/w/${slug}/${resource}${rest ?? ""}`;
}
