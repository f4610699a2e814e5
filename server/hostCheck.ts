// Which Host and Origin headers the monitor answers. A page on another site can make a browser
// talk to a loopback port by pointing its own host name at 127.0.0.1 (DNS rebinding): the request
// then carries that site's name in Host. Only loopback names (and the names the operator adds)
// are accepted, and a browser's Origin must be one of them too on the WebSocket endpoints and on
// every request that changes something.

/** Host names always accepted: the loopback names. */
function isLoopbackName(host: string): boolean {
  const h = host.toLowerCase();
  if (h === 'localhost' || h === '::1' || h === '[::1]') return true;
  // 127.0.0.0/8, written as a dotted quad.
  const m = /^127\.(\d{1,3})\.(\d{1,3})\.(\d{1,3})$/.exec(h);
  return m !== null && m.slice(1).every((x) => Number(x) <= 255);
}

/** The host part of a Host header value ("name:port", "[v6]:port"), lower case; undefined when malformed. */
export function hostName(header: string | undefined): string | undefined {
  if (header === undefined) return undefined;
  const v = header.trim().toLowerCase();
  if (v === '' || v.length > 255) return undefined;
  const m = /^(\[[0-9a-f:.]+\]|[a-z0-9.-]+)(:\d{1,5})?$/.exec(v);
  return m ? m[1] : undefined;
}

export interface HostPolicy {
  /** Extra host names accepted (the operator's, e.g. the machine's name on a lab network). */
  readonly names: readonly string[];
}

/** A policy from the operator's names and the address the monitor listens on. */
export function hostPolicy(allowedHosts: readonly string[] = [], listenHost?: string): HostPolicy {
  const names = allowedHosts.map((h) => h.trim().toLowerCase()).filter(Boolean);
  if (listenHost && listenHost !== '0.0.0.0' && listenHost !== '::') {
    names.push(listenHost.includes(':') && !listenHost.startsWith('[') ? `[${listenHost.toLowerCase()}]` : listenHost.toLowerCase());
  }
  return { names };
}

/** True when the Host header names this monitor (a loopback name or an allowed one). */
export function hostAllowed(policy: HostPolicy, header: string | undefined): boolean {
  const name = hostName(header);
  if (name === undefined) return false;
  return isLoopbackName(name) || policy.names.includes(name);
}

/**
 * True when a request's Origin is acceptable: absent (not a browser page, or a same-origin GET)
 * or an http(s) origin whose host is allowed.
 */
export function originAllowed(policy: HostPolicy, origin: string | undefined): boolean {
  if (origin === undefined) return true;
  let url: URL;
  try {
    url = new URL(origin);
  } catch {
    return false;
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:') return false;
  return hostAllowed(policy, url.host);
}
