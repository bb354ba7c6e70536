import { redirect } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";

export const dynamic = "force-dynamic";

export default async function AdminIndex() {
  await requirePageUser("admin", { path: "/admin" });
  redirect("/admin/users");
}
