import { signInSchema } from "@/lib/auth/schemas";
import { signInMessage, SIGN_IN_MESSAGES } from "@/lib/auth/messages";

function firstIssue(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  const issue = result.error?.issues[0];
  return issue ? { field: issue.path.map(String).join("."), message: issue.message } : null;
}

describe("signInSchema and messages", () => {
  it("requires both fields", () => {
    expect(firstIssue(signInSchema.safeParse({ email: "", password: "x" }))?.field).toBe("email");
    expect(firstIssue(signInSchema.safeParse({ email: "a@b.c", password: "" }))?.field).toBe("password");
  });
  it("maps next-auth error codes to plain sentences", () => {
    expect(signInMessage("CredentialsSignin")).toBe(SIGN_IN_MESSAGES.invalid);
    expect(signInMessage("Throttled")).toBe(SIGN_IN_MESSAGES.throttled);
    expect(signInMessage("Callback")).toBe(SIGN_IN_MESSAGES.unknown);
    expect(signInMessage(null)).toBeNull();
  });
});
