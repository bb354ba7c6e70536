"use client";

import { useRouter } from "next/navigation";
import type { MouseEvent } from "react";

/**
 * Client-side navigation for the plain links inside static markup (StaticMarkup's
 * tables): one click handler for the whole block instead of a <Link> component per
 * link, so a table of hundreds of links costs no client component per cell and makes
 * no prefetch request per link. A plain click (or Enter) on a same-site link navigates
 * through the router, as <Link> would; modified clicks (new tab, new window, download)
 * are left to the browser.
 */
export function SoftLinks({ html, className, id }: { html: string; className?: string; id?: string }) {
  const router = useRouter();
  const onClick = (e: MouseEvent<HTMLDivElement>) => {
    if (e.defaultPrevented || e.button !== 0 || e.metaKey || e.ctrlKey || e.shiftKey || e.altKey) return;
    const a = (e.target as Element).closest("a");
    if (!a || !e.currentTarget.contains(a) || (a.target && a.target !== "_self") || a.hasAttribute("download")) return;
    const url = new URL(a.href, window.location.href);
    if (url.origin !== window.location.origin) return;
    e.preventDefault();
    router.push(url.pathname + url.search + url.hash);
  };
  return <div id={id} className={className} onClick={onClick} dangerouslySetInnerHTML={{ __html: html }} />;
}
