import { auditResponseSchema, invitationCreatedResponseSchema, invitationsResponseSchema, membersResponseSchema } from "@/lib/team/responses";
import { changeRoleSchema, inviteSchema } from "@/lib/team/schemas";
import { idParams, member, type ApiRoute } from "./define";

const userId = idParams("userId", "The member's user id.");

export const TEAM_ROUTES: ApiRoute[] = [
  {
    area: "team",
    method: "GET",
    path: "/api/w/{slug}/members",
    summary: "List members",
    access: member("team.manage"),
    answers: { 200: { description: "Members with their roles, managers first.", schema: membersResponseSchema } },
  },
  {
    area: "team",
    method: "PATCH",
    path: "/api/w/{slug}/members/{userId}",
    summary: "Change a member's role",
    access: member("team.manage"),
    params: userId,
    body: changeRoleSchema,
    answers: { 200: { description: "The members after the change.", schema: membersResponseSchema } },
    errors: { 404: "That person is not a member of this workspace.", 409: "The workspace's last manager cannot stop being a manager." },
  },
  {
    area: "team",
    method: "DELETE",
    path: "/api/w/{slug}/members/{userId}",
    summary: "Remove a member",
    access: member("team.manage"),
    params: userId,
    answers: { 200: { description: "The members after the removal.", schema: membersResponseSchema } },
    errors: { 404: "That person is not a member of this workspace.", 409: "The workspace's last manager cannot be removed." },
  },
  {
    area: "team",
    method: "GET",
    path: "/api/w/{slug}/invitations",
    summary: "List pending invitations",
    access: member("team.manage"),
    answers: { 200: { description: "Invitations not yet accepted or expired.", schema: invitationsResponseSchema } },
  },
  {
    area: "team",
    method: "POST",
    path: "/api/w/{slug}/invitations",
    summary: "Invite someone by e-mail",
    description: "Sends the invitation mail with a link that is valid for a limited time.",
    access: member("team.manage"),
    body: inviteSchema,
    answers: { 201: { description: "The invitation.", schema: invitationCreatedResponseSchema } },
    errors: { 409: "That address is already a member.", 429: "Too many invitations in a short time." },
  },
  {
    area: "team",
    method: "DELETE",
    path: "/api/w/{slug}/invitations/{invitationId}",
    summary: "Revoke a pending invitation",
    access: member("team.manage"),
    params: idParams("invitationId", "The invitation's id."),
    answers: { 204: { description: "Revoked; its link no longer works." } },
    errors: { 404: "That invitation is not pending in this workspace." },
  },
  {
    area: "team",
    method: "GET",
    path: "/api/w/{slug}/audit",
    summary: "The audit trail",
    access: member("team.manage"),
    answers: { 200: { description: "The newest events, newest first.", schema: auditResponseSchema } },
  },
];
