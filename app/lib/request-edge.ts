/**
 * What a request says about where it comes from, decided without the database
 * (the proxy, route handlers and server actions all use it):
 * - `originAllowed`: may a request with these headers mutate (CSRF)?
 * - `safeNext`: the local path a `next` parameter may redirect to.
 * - `publicBaseUrl`: the base of links in e-mail.
 * - `clientAddress`: the client's network address, trusting X-Forwarded-For
 *   only as far as $RUNNEL_TRUSTED_PROXIES hops.
 */

const SAFE_METHODS = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * True when a request with these headers may mutate: a safe method, a bearer
 * token (not an ambient credential, so no cross-site forgery), or an Origin
 * whose host is the Host the request was sent to (X-Forwarded-Host first,
 * as a proxy sets it), or the host of $RUNNEL_PUBLIC_URL.
 */
export function originAllowed(method: string, h: Headers, url?: string): boolean {
  if (SAFE_METHODS.has(method.toUpperCase())) return true;
  if (/^Bearer\s/i.test(h.get("authorization") ?? "")) return true;
  const origin = h.get("origin");
  if (!origin || origin === "null") return false;
  let originHost: string;
  try {
    originHost = new URL(origin).host;
  } catch {
    return false;
  }
  const allowed = new Set<string>();
  const forwarded = h.get("x-forwarded-host")?.split(",")[0]?.trim();
  if (forwarded) allowed.add(forwarded);
  const host = h.get("host");
  if (host) allowed.add(host);
  if (!forwarded && !host && url) allowed.add(new URL(url).host);
  const publicUrl = process.env.RUNNEL_PUBLIC_URL;
  if (publicUrl) {
    try {
      allowed.add(new URL(publicUrl).host);
    } catch {
      // a malformed RUNNEL_PUBLIC_URL adds nothing
    }
  }
  return allowed.has(originHost);
}

/** An origin no request can come from: `next` must resolve against it and stay on it. */
const OWN_ORIGIN = "http://runnel.invalid";

/**
 * A redirect target from a `next` parameter: a path on Runnel's own origin, else "/".
 *
 * The value is parsed with the WHATWG URL parser (the one browsers use) against
 * our own origin, so whatever the browser would drop or rewrite (tabs, line
 * breaks, backslashes read as slashes, `.` segments) is dropped or rewritten
 * here first; only a result on that origin passes, and the path we answer is
 * the parser's normalised one. A path that would itself start with `//` or
 * `/\` (a network-path reference to another host) is refused as well.
 */
export function safeNext(next: unknown): string {
  if (typeof next !== "string" || next.length === 0 || next.length > 2048) return "/";
  // A relative target must be an absolute path; "evil.example" or "?x" would resolve but is not what was meant.
  if (!next.startsWith("/")) return "/";
  let url: URL;
  try {
    url = new URL(next, OWN_ORIGIN + "/");
  } catch {
    return "/";
  }
  if (url.origin !== OWN_ORIGIN || url.username || url.password) return "/";
  const path = url.pathname + url.search + url.hash;
  if (!path.startsWith("/") || path.startsWith("//") || path.startsWith("/\\")) return "/";
  return path;
}

/**
 * How many proxies in front of Runnel append to X-Forwarded-For
 * ($RUNNEL_TRUSTED_PROXIES, default 0). With 0 the header is ignored: anyone
 * can send it, so trusting it would let a client choose its own address.
 */
export function trustedProxyHops(): number {
  const n = Number(process.env.RUNNEL_TRUSTED_PROXIES ?? "0");
  return Number.isInteger(n) && n > 0 ? Math.min(n, 10) : 0;
}

/** The socket address Runnel's start script hands to each request (see proxy.ts), if any. */
export const SOCKET_ADDRESS_HEADER = "x-runnel-socket-address";

/**
 * The client's address for rate limiting.
 * - With N trusted proxies, the address the outermost trusted proxy saw: the
 *   N-th hop of X-Forwarded-For from the right (each proxy appends the address
 *   it received the request from; what the client wrote itself lies further left).
 * - With none, the peer address of the connection, which a client cannot choose.
 * The peer address comes from SOCKET_ADDRESS_HEADER, which Runnel's server
 * (scripts/lib/next-server.ts) sets on every request. (Next's own server sets
 * X-Forwarded-For from the socket only when the client sent none, so that
 * header alone cannot be trusted.)
 */
export function clientAddress(h: Headers): string {
  const hops = (h.get("x-forwarded-for") ?? "")
    .split(",")
    .map((s) => s.trim())
    .filter(Boolean);
  const socket = h.get(SOCKET_ADDRESS_HEADER);
  // Without Runnel's server in front (next dev, tests), Next's own X-Forwarded-For stands in for the socket.
  if (socket) hops.push(socket);
  if (hops.length === 0) return "unknown";
  // hops = [client-written…, seen by proxy 1, …, seen by proxy N, the socket's peer]
  return hops.at(-trustedProxyHops() - 1) ?? hops[0];
}

/**
 * The Content-Security-Policy of a page (Runnel's server sends it with every
 * page, scripts/lib/next-server.ts): scripts only with this response's nonce
 * (Next puts it on its own scripts when it finds it in the request's policy)
 * and what they load ('strict-dynamic'); everything else from our own origin;
 * no plugins, no framing, forms post only to us. Styles allow inline style
 * attributes, which React, CodeMirror and uPlot set; images come from our own
 * origin only (a comment's image on another server is shown as a link).
 */
export function contentSecurityPolicy(nonce: string, development = false): string {
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic'${development ? " 'unsafe-eval'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self' data:",
    `connect-src 'self'${development ? " ws: wss:" : ""}`,
    "worker-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
}

/** The policy for everything that is not a page (API answers, downloads): nothing may run or frame it. */
export const NON_PAGE_POLICY = "default-src 'none'; frame-ancestors 'none'; sandbox";

/** The site's base URL for links in e-mail: $RUNNEL_PUBLIC_URL, else the request's own scheme and host. */
export function publicBaseUrl(h: Headers): string {
  const configured = process.env.RUNNEL_PUBLIC_URL;
  if (configured) return configured.replace(/\/+$/, "");
  const host = h.get("x-forwarded-host")?.split(",")[0]?.trim() || h.get("host") || "127.0.0.1:3000";
  const proto = h.get("x-forwarded-proto")?.split(",")[0]?.trim() || "http";
  return `${proto}://${host}`;
}
