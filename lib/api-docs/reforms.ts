import {
  crosswalkCreatedResponseSchema,
  crosswalkDetailResponseSchema,
  crosswalkListResponseSchema,
  harmoniseDefaultsResponseSchema,
  harmonisedVersionResponseSchema,
} from "@/lib/reforms/responses";
import { createCrosswalkSchema, crosswalkParamsSchema, harmoniseDefaultsQuerySchema, harmoniseSchema } from "@/lib/reforms/service";
import { member, type ApiRoute } from "./define";

export const REFORMS_ROUTES: ApiRoute[] = [
  {
    area: "reforms",
    method: "GET",
    path: "/api/w/{slug}/intake/crosswalks",
    summary: "List crosswalks",
    access: member("data.view-unpublished"),
    answers: { 200: { description: "Crosswalks between boundary versions, newest first.", schema: crosswalkListResponseSchema } },
  },
  {
    area: "reforms",
    method: "POST",
    path: "/api/w/{slug}/intake/crosswalks",
    summary: "Derive or upload a crosswalk",
    description: "With `uploadId`: the steward's crosswalk CSV (from,to,share), checked. Without: an area-weighted crosswalk derived from the two boundary versions.",
    access: member("data.curate"),
    body: createCrosswalkSchema,
    answers: { 201: { description: "The crosswalk; an uploaded CSV that fails its checks is recorded as rejected with its report.", schema: crosswalkCreatedResponseSchema } },
    errors: { 400: "A field failed its schema, or both boundary versions are the same.", 404: "No such boundary version or upload in this workspace.", 409: "A boundary version is not validated or published." },
  },
  {
    area: "reforms",
    method: "GET",
    path: "/api/w/{slug}/intake/crosswalks/{crosswalkId}",
    summary: "One crosswalk with its pairs",
    access: member("data.view-unpublished"),
    params: crosswalkParamsSchema,
    answers: { 200: { description: "The crosswalk, its report, its pairs and the panels harmonised through it.", schema: crosswalkDetailResponseSchema } },
    errors: { 404: "No such crosswalk in this workspace." },
  },
  {
    area: "reforms",
    method: "GET",
    path: "/api/w/{slug}/intake/harmonise/defaults",
    summary: "Default harmonising methods of a panel version",
    access: member("data.view-unpublished"),
    query: harmoniseDefaultsQuerySchema,
    answers: { 200: { description: "The indicators and the default method of each.", schema: harmoniseDefaultsResponseSchema } },
    errors: { 404: "No such panel version in this workspace.", 409: "The panel version is neither validated nor published." },
  },
  {
    area: "reforms",
    method: "POST",
    path: "/api/w/{slug}/intake/harmonise",
    summary: "Harmonise a panel version onto other boundaries",
    description: "Makes a new panel version through a ready crosswalk; it records the crosswalk and methods that made it and is validated like an upload.",
    access: member("data.curate"),
    body: harmoniseSchema,
    answers: { 202: { description: "The new version is recorded and its validation queued.", schema: harmonisedVersionResponseSchema } },
    errors: { 400: "A field failed its schema, or a method does not fit its indicator.", 404: "No such panel version or crosswalk in this workspace.", 409: "The crosswalk is not ready or does not start from the panel's boundaries, or the panel version is not validated or published." },
  },
];
