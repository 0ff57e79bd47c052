/**
 * Where to go after signing in. Only a place on `origin` is accepted: the value is resolved the way
 * the browser will resolve it (so "/\evil.example" or "//evil.example", which browsers read as another
 * host, are refused), and the path, query string and fragment are kept, so /check?id=... survives
 * sign-in (OWASP ASVS 5.0 V3 Web Frontend Security: redirects only to allowed places).
 */
export function safeNext(raw: string | null | undefined, origin: string, fallback = "/engines"): string {
  if (!raw || !raw.startsWith("/")) return fallback;
  let url: URL;
  try {
    url = new URL(raw, origin);
  } catch {
    return fallback;
  }
  if (url.origin !== new URL(origin).origin) return fallback;
  return `${url.pathname}${url.search}${url.hash}`;
}
