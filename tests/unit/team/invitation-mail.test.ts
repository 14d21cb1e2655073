import { renderInvitationEmail } from "@/lib/team/invitation-mail";
import { invitationEmailPayloadSchema } from "@/lib/jobs/payloads";

const payload = invitationEmailPayloadSchema.parse({
  invitationId: 7,
  to: "new.person@example.org",
  workspaceName: "Veldmark <Regional> Unit",
  roleLabel: "Economist",
  inviterName: "Ilse Brandvoort",
  acceptUrl: "http://127.0.0.1:3000/invite/AbCdEfGhIjKlMnOpQrStUvWxYz0123456789_-abcd",
  expiresAt: "2026-12-09T10:00:00.000Z",
});

describe("renderInvitationEmail", () => {
  const mail = renderInvitationEmail(payload);

  it("puts the link, workspace, role and expiry in the text part", () => {
    expect(mail.subject).toBe("You are invited to Veldmark <Regional> Unit on Tessera");
    expect(mail.text).toContain(payload.acceptUrl);
    expect(mail.text).toContain("as Economist");
    expect(mail.text).toContain("9 December 2026");
  });

  it("links to the accept page in the HTML part and escapes names", () => {
    expect(mail.html).toContain(`href="${payload.acceptUrl}"`);
    expect(mail.html).toContain("Veldmark &lt;Regional&gt; Unit");
    expect(mail.html).not.toContain("<Regional>");
  });
});
