// The workspace roles a membership or an invitation can hold (memberships.role,
// invitations.role). What each role may do is lib/auth/roles.ts.

export const ROLES = ["manager", "steward", "economist", "subscriber"] as const;
export type Role = (typeof ROLES)[number];
