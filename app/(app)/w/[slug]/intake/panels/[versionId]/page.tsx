import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { VersionScreen } from "@/components/intake/version-screen";
import { requireMember } from "@/lib/auth/guard";
import { guardPage } from "@/lib/auth/page";
import { idText } from "@/lib/http/params";
import { can } from "@/lib/auth/roles";
import { versionDetail } from "@/lib/intake/queries";

export const metadata: Metadata = { title: "Panel version" };

export default async function VersionPage({ params }: { params: Promise<{ slug: string; versionId: string }> }) {
  const { slug, versionId } = await params;
  const access = await guardPage(`/w/${slug}/intake/panels/${versionId}`, () => requireMember(slug, "data.view-unpublished"));
  // The one id parser: past int4 the lookup was a 500, now it is not found.
  const parsed = idText().safeParse(versionId);
  if (!parsed.success) notFound();
  const id = parsed.data;
  if (!(await versionDetail(access.workspace.id, "panel", id, can(access.role, "data.view-unpublished")))) notFound();
  return <VersionScreen slug={slug} kind="panel" versionId={id} canCurate={can(access.role, "data.curate")} workspaceName={access.workspace.name} />;
}
