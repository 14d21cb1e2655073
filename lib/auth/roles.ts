// Roles and capabilities of the roles table (docs/guarantees.md). This file is the single source:
// pages, route handlers, server actions and the nav all ask `can()`.
// The role list itself is models/roles.ts, so the models need nothing from lib/.

import { ROLES, type Role } from "@/models/roles";

export { ROLES, type Role };

export const CAPABILITIES = [
  "results.view", // see published results, timelines, maps
  "digests.subscribe", // manage own digest subscription
  "runs.manage", // start, cancel and rerun analyses; export results
  "data.curate", // upload boundaries and panels, validate, publish, archive
  "data.view-unpublished", // see unpublished uploads and validation reports
  "team.manage", // invite, change roles, remove members, see the audit trail
] as const;
export type Capability = (typeof CAPABILITIES)[number];

// Each capability names the least senior role that holds it; roles are
// strictly nested in the roles table (docs/guarantees.md), so a rank comparison is the whole table.
const RANK: Record<Role, number> = { subscriber: 0, economist: 1, steward: 2, manager: 3 };
const LEAST_ROLE: Record<Capability, Role> = {
  "results.view": "subscriber",
  "digests.subscribe": "subscriber",
  "runs.manage": "economist",
  "data.curate": "steward",
  "data.view-unpublished": "steward",
  "team.manage": "manager",
};

/** True when `role` holds `capability` in a workspace. */
export function can(role: Role, capability: Capability): boolean {
  return RANK[role] >= RANK[LEAST_ROLE[capability]];
}

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

export const ROLE_LABELS: Record<Role, string> = {
  manager: "Manager",
  steward: "Data steward",
  economist: "Economist",
  subscriber: "Subscriber",
};

export const ROLE_SUMMARIES: Record<Role, string> = {
  manager: "Everything stewards can do, plus invitations, roles and the audit trail.",
  steward: "Uploads, validates and publishes boundaries and panels; runs analyses.",
  economist: "Runs, compares and exports analyses of published data.",
  subscriber: "Reads published results and receives e-mail digests.",
};
