import { badRequest, jsonError } from "@/lib/http/errors";
import { errorResponse } from "@/lib/http/route";
import { acceptInvitationSchema } from "@/lib/team/schemas";
import { getSessionUser } from "@/lib/auth/session";
import { acceptInvitation } from "@/lib/team/invitations";

// Belongs to no workspace yet: the invitation token is the credential, checked
// inside acceptInvitation together with the session (for existing accounts).
export async function POST(request: Request): Promise<Response> {
  let raw: unknown;
  try {
    raw = await request.json();
  } catch {
    return jsonError(400, "The request body is not valid JSON.", { field: null });
  }
  const parsed = acceptInvitationSchema.safeParse(raw);
  if (!parsed.success) return badRequest(parsed.error);
  try {
    const session = await getSessionUser();
    const result = await acceptInvitation({ ...parsed.data, sessionUserId: session?.id ?? null });
    return Response.json(result);
  } catch (error) {
    return errorResponse(error);
  }
}
