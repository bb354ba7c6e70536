/** Roles of Linemix, lowest first: operator < engineer < admin (admin can do everything). */
export const ROLES = ["operator", "engineer", "admin"] as const;
export type Role = (typeof ROLES)[number];

const RANK: Record<Role, number> = { operator: 0, engineer: 1, admin: 2 };

export function isRole(value: unknown): value is Role {
  return typeof value === "string" && (ROLES as readonly string[]).includes(value);
}

/** True when `role` is `min` or higher. An unknown role string never passes. */
export function roleAtLeast(role: string, min: Role): boolean {
  return isRole(role) && RANK[role] >= RANK[min];
}

export const ROLE_LABELS: Record<Role, string> = { operator: "Operator", engineer: "Engineer", admin: "Admin" };

export const API_SCOPES = ["tallies:write", "analysis:read"] as const;
export type ApiScope = (typeof API_SCOPES)[number];

export function isApiScope(value: unknown): value is ApiScope {
  return typeof value === "string" && (API_SCOPES as readonly string[]).includes(value);
}

/** Which session role a cookie-authenticated API call needs for a scope, and whether badge sessions pass. */
export const SCOPE_ROLE: Record<ApiScope, { min: Role; floor: boolean }> = {
  "tallies:write": { min: "operator", floor: true },
  "analysis:read": { min: "engineer", floor: false },
};
