/**
 * Where to go after signing in. Only a path on `origin` is accepted (OWASP ASVS 5.0 V3 Web Frontend
 * Security: redirects only to allowed places). The value is resolved against the app's origin the way
 * the browser will resolve it, and the path, query string and fragment are kept, so /check?id=...
 * survives sign-in.
 *
 * Resolving once is not enough: the result is handed to the router, which reads it as a URL reference
 * again. Dot segments collapse on the first reading, so "/.//evil.example/x", "/..//evil.example/x",
 * "/%2e//evil.example/x" and "/.\\evil.example/x" all become the path "//evil.example/x", which the
 * second reading takes as another host. So the serialised result must start with exactly one slash
 * and must read back to the very same URL on our origin.
 */
export function safeNext(raw: string | null | undefined, origin: string, fallback = "/engines"): string {
  if (typeof raw !== "string" || !raw.startsWith("/")) return fallback;
  let home: URL;
  let url: URL;
  try {
    home = new URL(origin);
    url = new URL(raw, home);
  } catch {
    return fallback;
  }
  if (url.origin !== home.origin) return fallback;
  const out = `${url.pathname}${url.search}${url.hash}`;
  // "//" and "/\" are read as "another host follows" by every browser (WHATWG URL, special schemes)
  if (!out.startsWith("/") || out.startsWith("//") || out.startsWith("/\\")) return fallback;
  const again = new URL(out, home);
  if (again.origin !== home.origin || again.href !== url.href) return fallback;
  return out;
}
