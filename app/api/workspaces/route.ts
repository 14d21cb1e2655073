import { requireUser } from "@/lib/auth/guard";
import { badRequest, jsonError } from "@/lib/http/errors";
import { errorResponse } from "@/lib/http/route";
import { createWorkspaceSchema } from "@/lib/workspaces/schemas";
import { createWorkspace } from "@/lib/workspaces/service";

// Belongs to no workspace yet, so memberRoute cannot guard it: any signed-in
// user may create one and becomes its first manager (docs/guarantees.md, "No one reads another team's data").
export async function POST(request: Request): Promise<Response> {
  try {
    const user = await requireUser();
    let raw: unknown;
    try {
      raw = await request.json();
    } catch {
      return jsonError(400, "The request body is not valid JSON.", { field: null });
    }
    const parsed = createWorkspaceSchema.safeParse(raw);
    if (!parsed.success) return badRequest(parsed.error);
    const created = await createWorkspace(user, parsed.data);
    return Response.json({ slug: created.slug, name: created.name }, { status: 201 });
  } catch (error) {
    return errorResponse(error);
  }
}
