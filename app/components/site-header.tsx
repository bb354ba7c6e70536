import Link from "next/link";
import { signOut } from "@/app/signin/actions";
import { currentUser } from "@/lib/auth/guard";
import { ROLE_LABELS, roleAtLeast, type Role } from "@/lib/auth/roles";
import { openEpisodeCount } from "@/lib/episodes/open-count";

/** Main destinations and the lowest role that may open each (badge sessions: floor entry only). */
const NAV: { href: string; label: string; min: Role; floor?: boolean }[] = [
  { href: "/", label: "Overview", min: "engineer" },
  { href: "/week", label: "Weekly review", min: "engineer" },
  { href: "/episodes", label: "Flagged periods", min: "engineer" },
  { href: "/entry", label: "Floor entry", min: "operator", floor: true },
  { href: "/entry/corrections", label: "Corrections", min: "operator", floor: true },
  { href: "/import", label: "Import", min: "engineer" },
  { href: "/setup", label: "Setup", min: "admin" },
  { href: "/admin/users", label: "Users & tokens", min: "admin" },
];

/** The bar on every page: brand, the destinations the signed-in role may use, who is signed in. */
export async function SiteHeader() {
  const me = await currentUser();
  const items = me ? NAV.filter((item) => roleAtLeast(me.role, item.min) && (me.sessionKind === "password" || item.floor)) : [];
  const home = me && (me.role === "operator" || me.sessionKind === "badge") ? "/entry" : "/";
  const openEpisodes = items.some((item) => item.href === "/episodes") ? await openEpisodeCount() : null;
  return (
    <header className="site-header">
      <Link prefetch={false} href={me ? home : "/signin"} className="brand" aria-label="Linemix home">
        <span className="brand-mark" aria-hidden="true">
          ▚
        </span>
        Linemix
      </Link>
      {items.length > 0 && (
        <nav aria-label="Main">
          <ul>
            {items.map((item) => (
              <li key={item.href}>
                <Link prefetch={false} href={item.href}>
                  {item.label}
                  {item.href === "/episodes" && openEpisodes !== null && " "}
                  {item.href === "/episodes" && openEpisodes !== null && (
                    <span className="state state-flagged header-open-episodes" data-testid="open-episodes">
                      {openEpisodes} open
                    </span>
                  )}
                </Link>
              </li>
            ))}
          </ul>
        </nav>
      )}
      {me && (
        <div className="header-aside">
          <span className="header-user">
            {me.displayName} <span className="header-role">{ROLE_LABELS[me.role]}{me.sessionKind === "badge" ? " · badge" : ""}</span>
          </span>
          <form action={signOut}>
            <button type="submit" className="header-signout">
              Sign out
            </button>
          </form>
        </div>
      )}
    </header>
  );
}
