import { changePassword } from "@/lib/auth/account";
import { requireUser } from "@/lib/auth/guard";
import { clientIp } from "@/lib/auth/client-ip";
import { badRequest, jsonError } from "@/lib/http/errors";
import { errorResponse } from "@/lib/http/route";
import { changePasswordSchema } from "@/lib/auth/schemas";

// The signed-in user's own password: belongs to no workspace, so there is no
// membership for memberRoute to check; requireUser() is the gate and
// changePasswordSchema checks the body.
export async function POST(request: Request): Promise<Response> {
  try {
    const user = await requireUser();
    let raw: unknown;
    try {
      raw = await request.json();
    } catch {
      return jsonError(400, "The request body is not valid JSON.", { field: null });
    }
    const parsed = changePasswordSchema.safeParse(raw);
    if (!parsed.success) return badRequest(parsed.error);
    await changePassword(user, parsed.data, clientIp(request.headers));
    // Every session issued before has ended, this one included.
    return Response.json({ changed: true, email: user.email });
  } catch (error) {
    return errorResponse(error);
  }
}
