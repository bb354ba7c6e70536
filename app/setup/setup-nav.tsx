import Link from "next/link";
import { MASTER_LABELS, type MasterKind } from "@/lib/db/master-data";

export const SETUP_KINDS: MasterKind[] = ["line", "shift", "category", "product"];

export function SetupNav({ current }: { current: MasterKind | "overview" }) {
  return (
    <nav aria-label="Setup" className="setup-nav">
      <ul>
        <li>
          <Link href="/setup" aria-current={current === "overview" ? "page" : undefined}>
            Overview
          </Link>
        </li>
        {SETUP_KINDS.map((k) => (
          <li key={k}>
            <Link href={`/setup/${k}`} aria-current={current === k ? "page" : undefined}>
              {MASTER_LABELS[k].many}
            </Link>
          </li>
        ))}
      </ul>
    </nav>
  );
}
