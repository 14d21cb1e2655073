import { CAPABILITIES, ROLES, can, isRole, type Capability, type Role } from "@/lib/auth/roles";

// The full table of the roles table (docs/guarantees.md), written out row by row so a change to
// can() that disagrees with the design fails here.
const TABLE: Record<Capability, Record<Role, boolean>> = {
  "results.view": { manager: true, steward: true, economist: true, subscriber: true },
  "digests.subscribe": { manager: true, steward: true, economist: true, subscriber: true },
  "runs.manage": { manager: true, steward: true, economist: true, subscriber: false },
  "data.curate": { manager: true, steward: true, economist: false, subscriber: false },
  "data.view-unpublished": { manager: true, steward: true, economist: false, subscriber: false },
  "team.manage": { manager: true, steward: false, economist: false, subscriber: false },
};

describe("can(role, capability)", () => {
  it("covers every capability and role of the design", () => {
    expect([...CAPABILITIES].sort()).toEqual(Object.keys(TABLE).sort());
    expect([...ROLES].sort()).toEqual(["economist", "manager", "steward", "subscriber"]);
  });

  const cases = CAPABILITIES.flatMap((capability) => ROLES.map((role) => [role, capability, TABLE[capability][role]] as const));
  it.each(cases)("%s / %s → %s", (role, capability, expected) => {
    expect(can(role, capability)).toBe(expected);
  });

  it("gives only managers the team capability", () => {
    expect(ROLES.filter((r) => can(r, "team.manage"))).toEqual(["manager"]);
  });
});

describe("isRole", () => {
  it("accepts the four roles and nothing else", () => {
    for (const r of ROLES) expect(isRole(r)).toBe(true);
    for (const v of ["Manager", "admin", "", null, undefined, 3, "owner"]) expect(isRole(v)).toBe(false);
  });
});
