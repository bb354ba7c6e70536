import type { Metadata } from "next";
import { safeNext } from "@/lib/auth/next-path";
import { currentUser } from "@/lib/auth/guard";
import { SignInForms } from "./signin-forms";

export const dynamic = "force-dynamic";
export const metadata: Metadata = { title: "Sign in" };

export default async function SignInPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const params = await searchParams;
  const next = safeNext(typeof params.next === "string" ? params.next : undefined, "");
  const mode = params.mode === "badge" ? "badge" : "password";
  const me = await currentUser();
  return (
    <>
      <h1>Sign in</h1>
      {me && (
        <p className="caution">
          You are signed in as {me.displayName} ({me.role}). Signing in again replaces that session.
        </p>
      )}
      <SignInForms next={next} initialMode={mode} />
    </>
  );
}
