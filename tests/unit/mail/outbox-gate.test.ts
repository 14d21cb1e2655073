import { outboxEnabled } from "@/lib/mail/outbox-gate";
import { headersFor, WORKSPACE_HEADER } from "@/lib/mail/send";

const local = { TESSERA_OUTBOX: true, SMTP_HOST: "127.0.0.1", SMTP_PORT: 2525, SMTP_SINK_PORT: 2525 };

describe("the Outbox page is on only while mail goes to the local sink", () => {
  it("is on with TESSERA_OUTBOX=1, a loopback SMTP_HOST and SMTP_PORT equal to the sink's port", () => {
    expect(outboxEnabled(local)).toBe(true);
    for (const host of ["localhost", "::1", "[::1]", " LOCALHOST "]) expect(outboxEnabled({ ...local, SMTP_HOST: host })).toBe(true);
  });

  it("is off when TESSERA_OUTBOX=0", () => {
    expect(outboxEnabled({ ...local, TESSERA_OUTBOX: false })).toBe(false);
  });

  it("is off when mail goes to another host, a real relay", () => {
    for (const host of ["smtp.example.org", "10.0.0.5", "127.0.0.1.example.org", "0.0.0.0", ""]) expect(outboxEnabled({ ...local, SMTP_HOST: host })).toBe(false);
  });

  it("is off when SMTP_PORT is not the sink's port (a relay on this machine), or no sink was started", () => {
    expect(outboxEnabled({ ...local, SMTP_PORT: 25 })).toBe(false);
    expect(outboxEnabled({ ...local, SMTP_SINK_PORT: undefined })).toBe(false);
  });
});

describe("the workspace header a mail carries", () => {
  it("names the workspace given to sendMail, never one a caller put into the headers", () => {
    expect(headersFor({ "X-Tessera-Job": "7", "x-tessera-workspace": "99" }, 12)).toEqual({ "X-Tessera-Job": "7", [WORKSPACE_HEADER]: "12" });
    expect(headersFor({ "X-TESSERA-WORKSPACE": "99" }, 12)).toEqual({ [WORKSPACE_HEADER]: "12" });
  });

  it("is absent on mail of no workspace, even when a caller supplied one", () => {
    expect(headersFor({ "X-Tessera-Workspace": "99", "X-Tessera-Job": "1" }, null)).toEqual({ "X-Tessera-Job": "1" });
    expect(headersFor(undefined, null)).toEqual({});
  });
});
