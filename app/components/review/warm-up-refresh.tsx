"use client";

import { useRouter } from "next/navigation";
import { useEffect, useState } from "react";

/** How often the overview asks again while the warm-up after a start is building scans. */
const EVERY_MS = 4_000;

/**
 * Refreshes the page every few seconds while it is shown (the overview renders it only
 * while some scans are still being computed after a server start, so the refreshing
 * stops when they are all ready), with a checkbox to stop it and a plain link that
 * reloads (it works without JavaScript too).
 */
export function WarmUpRefresh({ href }: { href: string }) {
  const router = useRouter();
  const [auto, setAuto] = useState(true);
  useEffect(() => {
    if (!auto) return;
    const timer = setInterval(() => router.refresh(), EVERY_MS);
    return () => clearInterval(timer);
  }, [auto, router]);
  return (
    <span className="warm-up-refresh">
      <a href={href}>Refresh now</a>
      <label className="checkbox">
        <input type="checkbox" checked={auto} onChange={(e) => setAuto(e.target.checked)} /> refresh every {EVERY_MS / 1000} s
      </label>
    </span>
  );
}
