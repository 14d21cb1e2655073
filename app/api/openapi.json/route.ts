import { errorResponse } from "@/lib/http/route";
import { openApiDocument } from "@/lib/api-docs/document";
import { OPENAPI_CACHE_CONTROL } from "@/lib/security/headers";

// The OpenAPI 3.1 document (lib/api-docs): public, the same for everyone, so it
// may be cached (lib/security/headers.ts lets this one API path be).
export function GET(): Response {
  try {
    return Response.json(openApiDocument(), { headers: { "cache-control": OPENAPI_CACHE_CONTROL } });
  } catch (error) {
    return errorResponse(error);
  }
}
