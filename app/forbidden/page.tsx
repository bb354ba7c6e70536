import type { Metadata } from "next";
import Link from "next/link";
import { currentUser } from "@/lib/auth/guard";
import { ROLE_LABELS, isRole } from "@/lib/auth/roles";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Not allowed" };

export default async function ForbiddenPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  const need = typeof params.need === "string" && isRole(params.need) ? params.need : null;
  const badge = params.badge === "1";
  const me = await currentUser();
  return (
    <>
      <h1>Not allowed</h1>
      {badge ? (
        <p>A badge sign-in is for floor entry only. Sign in with your name and password for this page.</p>
      ) : (
        <p>
          {need ? `This page needs the ${ROLE_LABELS[need]} role` : "Your role does not allow this page"}
          {me ? `; you are signed in as ${me.displayName} (${ROLE_LABELS[me.role]}).` : "."} Ask an administrator if you need access.
        </p>
      )}
      <p>
        {me?.role === "operator" || me?.sessionKind === "badge" ? <Link href="/entry">Go to floor entry</Link> : <Link href="/">Go to the overview</Link>}
        {" · "}
        <Link href="/signin">Sign in as someone else</Link>
      </p>
    </>
  );
}
