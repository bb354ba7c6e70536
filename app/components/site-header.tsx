import Link from "next/link";

const NAV = [
  { href: "/", label: "Overview" },
  { href: "/week", label: "Weekly review" },
  { href: "/episodes", label: "Flagged periods" },
  { href: "/entry", label: "Floor entry" },
  { href: "/import", label: "Import" },
  { href: "/setup", label: "Setup" },
];

/** The bar on every page: brand and the main destinations. */
export async function SiteHeader() {
  return (
    <header className="site-header">
      <Link href="/" className="brand" aria-label="Linemix home">
        <span className="brand-mark" aria-hidden="true">
          ▚
        </span>
        Linemix
      </Link>
      <nav aria-label="Main">
        <ul>
          {NAV.map((item) => (
            <li key={item.href}>
              <Link href={item.href}>{item.label}</Link>
            </li>
          ))}
        </ul>
      </nav>
    </header>
  );
}
