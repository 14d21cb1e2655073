import { getCapturedMail, latestMailTo, listCapturedMail } from "@/lib/mail/outbox";
import { sendMail } from "@/lib/mail/send";
import { requireTestServices, uniqueAddress } from "@/tests/helpers/env";
import { waitForMailTo } from "@/tests/helpers/mail";
import { closeConnections } from "@/tests/helpers/teardown";
import { makeWorkspace } from "@/tests/integration/auth/fixtures";

beforeAll(async () => {
  await requireTestServices();
});
afterAll(closeConnections);

describe("mail through the SMTP sink into outbox_messages", () => {
  test("sendMail is captured with subject, bodies, recipients and headers", async () => {
    const since = new Date(Date.now() - 1000);
    const to = uniqueAddress("mail");
    const cc = uniqueAddress("cc");
    const subject = `Unemployment clustering rose in 2014 (${Date.now()})`;
    const { workspace } = await makeWorkspace({ manager: "manager" });
    const messageId = await sendMail({
      workspaceId: workspace.id,
      to,
      cc,
      subject,
      text: "Moran's I for the unemployment rate rose from 0.21 to 0.47.",
      html: "<p>Moran's I for the <b>unemployment rate</b> rose from 0.21 to 0.47.</p>",
      headers: { "X-Tessera-Digest": "weekly" },
    });
    expect(messageId).toMatch(/^<.+@.+>$/);

    const mail = await waitForMailTo(to, { since, subjectContains: "Unemployment clustering" });
    expect(mail.subject).toBe(subject);
    expect(mail.messageId).toBe(messageId);
    expect(mail.text?.trim()).toBe("Moran's I for the unemployment rate rose from 0.21 to 0.47.");
    expect(mail.html).toContain("<b>unemployment rate</b>");
    expect(mail.to).toEqual(expect.arrayContaining([to, cc]));
    expect(mail.from).toContain("no-reply@tessera.invalid");
    expect(mail.headers["x-tessera-digest"]).toBe("weekly");

    // The Cc recipient finds the same message; the list and the detail agree.
    expect((await latestMailTo(cc))?.id).toBe(mail.id);
    const listed = await listCapturedMail(workspace.id, { limit: 20 });
    expect(listed.map((m) => m.id)).toContain(mail.id);
    const detail = await getCapturedMail(workspace.id, mail.id);
    expect(detail?.subject).toBe(subject);
    expect(await getCapturedMail(workspace.id, 999_999_999)).toBeNull();
    expect(await getCapturedMail(workspace.id, "not-a-number")).toBeNull();
  });

  test("sendMail refuses bad input with the field named", async () => {
    await expect(sendMail({ to: "not-an-address", subject: "x", text: "y", workspaceId: null })).rejects.toThrow(/invalid to/);
    await expect(sendMail({ to: uniqueAddress(), subject: "", text: "y", workspaceId: null })).rejects.toThrow(/subject/);
    await expect(sendMail({ to: uniqueAddress(), subject: "no body", workspaceId: null })).rejects.toThrow(/text or html/);
    await expect(sendMail({ to: uniqueAddress(), subject: "no workspace", text: "y", workspaceId: 0 })).rejects.toThrow(/invalid workspaceId/);
  });
});
