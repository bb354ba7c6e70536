import Link from "next/link";

export function AdminNav({ current }: { current: "users" | "tokens" }) {
  return (
    <nav aria-label="Administration" className="admin-nav">
      <ul>
        <li>
          <Link href="/admin/users" aria-current={current === "users" ? "page" : undefined}>
            Users
          </Link>
        </li>
        <li>
          <Link href="/admin/tokens" aria-current={current === "tokens" ? "page" : undefined}>
            API tokens
          </Link>
        </li>
      </ul>
    </nav>
  );
}
