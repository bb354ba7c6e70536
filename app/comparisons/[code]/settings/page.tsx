import type { Metadata } from "next";
import Link from "next/link";
import { notFound } from "next/navigation";
import { requirePageUser } from "@/lib/auth/guard";
import { getComparison, settingsOf } from "@/lib/db/comparisons";
import { loadMasterData } from "@/lib/db/plant";
import { kindLabel, namesFrom } from "@/lib/review/names";
import { SettingsForm } from "../../../components/review/settings-form";
import "../../../components/review/review.css";

export const dynamic = "force-dynamic";

type Params = { params: Promise<{ code: string }> };

export const metadata: Metadata = { title: "Comparison settings" };

export default async function SettingsPage({ params }: Params) {
  const { code: raw } = await params;
  const code = decodeURIComponent(raw);
  await requirePageUser("engineer", { path: `/comparisons/${raw}/settings` });
  const [c, plant] = await Promise.all([getComparison(code), loadMasterData()]);
  if (!c) notFound();
  const names = namesFrom(plant);
  const base = `/comparisons/${encodeURIComponent(c.code)}`;
  return (
    <>
      <p className="crumbs">
        <Link prefetch={false} href="/">Overview</Link> / <Link prefetch={false} href={base}>{c.name}</Link> / Settings
      </p>
      <h1>Settings: {c.name}</h1>
      <p className="lede">
        {kindLabel(c.compare, c.lines, names)}. Every change is recorded with your name, and the comparison is scanned again with the new settings.
      </p>
      <SettingsForm
        code={c.code}
        compare={c.compare}
        initial={settingsOf(c)}
        lines={plant.lines.map((l) => ({ code: l.code, name: l.name }))}
        shifts={plant.shifts.map((s) => ({ code: s.code, name: s.name }))}
        categories={plant.categories.map((k) => ({ code: k.code, name: k.name }))}
      />
    </>
  );
}
