/**
 * Where to go after sign-in: only a same-site relative path. Anything that could leave
 * the site ("//evil", "/\\evil", "https://…", control characters) becomes "/".
 */
export function safeNext(value: string | null | undefined, fallback = "/"): string {
  if (!value || value.length > 1000) return fallback;
  if (!value.startsWith("/") || value.startsWith("//") || value.startsWith("/\\")) return fallback;
  if (/[\u0000-\u001f\u007f\\]/.test(value)) return fallback;
  try {
    const url = new URL(value, "http://linemix.invalid");
    if (url.origin !== "http://linemix.invalid") return fallback;
    if (url.pathname.startsWith("/signin")) return fallback;
    return url.pathname + url.search + url.hash;
  } catch {
    return fallback;
  }
}
