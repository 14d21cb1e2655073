import { MOVED_WORKSPACE_RESOURCES, movedApiPath } from "@/lib/http/moved-paths";

describe("movedApiPath: the workspace APIs that moved under /api/w/<slug>/", () => {
  it("maps every moved resource, its sub-paths included, keeping the slug and the rest as they came", () => {
    expect(MOVED_WORKSPACE_RESOURCES).toEqual(["audit", "intake", "invitations", "members"]);
    expect(movedApiPath("/api/workspaces/veldmark/audit")).toBe("/api/w/veldmark/audit");
    expect(movedApiPath("/api/workspaces/veldmark/intake")).toBe("/api/w/veldmark/intake");
    expect(movedApiPath("/api/workspaces/veldmark/intake/uploads/0b3c/complete")).toBe("/api/w/veldmark/intake/uploads/0b3c/complete");
    expect(movedApiPath("/api/workspaces/veldmark/intake/indicators/income%20per%20head")).toBe("/api/w/veldmark/intake/indicators/income%20per%20head");
    expect(movedApiPath("/api/workspaces/veldmark/invitations/12")).toBe("/api/w/veldmark/invitations/12");
    expect(movedApiPath("/api/workspaces/veldmark/members/7")).toBe("/api/w/veldmark/members/7");
    expect(movedApiPath("/api/workspaces/caf%C3%A9/members")).toBe("/api/w/caf%C3%A9/members");
  });

  it("leaves every other path alone: creating a workspace, the new prefix, pages, look-alikes", () => {
    for (const path of [
      "/api/workspaces",
      "/api/workspaces/veldmark",
      "/api/workspaces/veldmark/runs",
      "/api/workspaces/veldmark/intakes",
      "/api/workspaces//intake",
      "/api/w/veldmark/intake",
      "/api/w/veldmark/members",
      "/w/veldmark/intake",
      "/api/invitations/accept",
      "/x/api/workspaces/veldmark/intake",
    ]) {
      expect({ path, moved: movedApiPath(path) }).toEqual({ path, moved: null });
    }
  });

  it("always answers a path on this origin under /api/w/", () => {
    for (const path of ["/api/workspaces/%2F%2Fevil.example/intake", "/api/workspaces/%5Cevil.example/members", "/api/workspaces/..%2F..%2Fsign-in/audit"]) {
      const moved = movedApiPath(path) ?? "";
      expect({ path, moved: moved.startsWith("/api/w/") }).toEqual({ path, moved: true });
      expect({ path, origin: new URL(moved, "http://127.0.0.1:3000").origin }).toEqual({ path, origin: "http://127.0.0.1:3000" });
    }
    expect(movedApiPath("/api/workspaces/\\evil.example/intake")).toBeNull();
  });
});
