import { publicAccess, type ApiRoute } from "./define";

export const REFERENCE_ROUTES: ApiRoute[] = [
  {
    area: "reference",
    method: "GET",
    path: "/api/openapi.json",
    summary: "This OpenAPI 3.1 document",
    description: "Generated from the request and response schemas the route handlers use; the API reference page renders it.",
    access: publicAccess("no sign-in; the same for everyone, so it may be cached."),
    answers: { 200: { description: "The OpenAPI document.", contentType: "application/json" } },
  },
];
