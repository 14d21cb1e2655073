import { acceptInvitationSchema, changeRoleSchema, inviteSchema } from "@/lib/team/schemas";

function firstIssue(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  const issue = result.error?.issues[0];
  return issue ? { field: issue.path.map(String).join("."), message: issue.message } : null;
}

describe("inviteSchema", () => {
  it("lowercases and trims the address", () => {
    expect(inviteSchema.parse({ email: "  Ada.Lovelace@Example.ORG ", role: "steward" })).toEqual({
      email: "ada.lovelace@example.org",
      role: "steward",
    });
  });

  it("names the e-mail field when the address is malformed", () => {
    const result = inviteSchema.safeParse({ email: "not-an-address", role: "economist" });
    expect(result.success).toBe(false);
    expect(firstIssue(result)).toEqual({ field: "email", message: "Enter a valid e-mail address, like name@example.org." });
  });

  it("names the role field for an unknown role", () => {
    const result = inviteSchema.safeParse({ email: "a@example.org", role: "owner" });
    expect(firstIssue(result)?.field).toBe("role");
    expect(firstIssue(result)?.message).toMatch(/manager, steward, economist, subscriber/);
  });

  it("rejects a missing e-mail with a sentence, not a type error", () => {
    const result = inviteSchema.safeParse({ role: "economist" });
    expect(firstIssue(result)).toEqual({ field: "email", message: "Enter an e-mail address." });
  });
});

describe("changeRoleSchema", () => {
  it("accepts each role", () => {
    for (const role of ["manager", "steward", "economist", "subscriber"]) expect(changeRoleSchema.parse({ role })).toEqual({ role });
  });
  it("refuses anything else", () => {
    expect(changeRoleSchema.safeParse({ role: "MANAGER" }).success).toBe(false);
    expect(changeRoleSchema.safeParse({}).success).toBe(false);
  });
});

describe("acceptInvitationSchema", () => {
  it("requires passwords of at least 10 characters", () => {
    const result = acceptInvitationSchema.safeParse({ token: "t", name: "A", password: "short" });
    expect(firstIssue(result)).toEqual({ field: "password", message: "Use at least 10 characters for your password." });
  });
  it("lets an existing user accept with the token alone", () => {
    expect(acceptInvitationSchema.parse({ token: "abc" })).toEqual({ token: "abc" });
  });
});
