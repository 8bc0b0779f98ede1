import type { IncomingMessage } from 'node:http';

/**
 * Request header carrying the TCP peer address of the connection, set by the server itself (see
 * installPeerAddressHeader). Next's own X-Forwarded-For is kept as the client sent it when present, so it cannot
 * tell who is really connecting; this header can, because any client-sent copy is replaced.
 */
export const PEER_ADDRESS_HEADER = 'x-trenchant-peer-address';

const holder = globalThis as typeof globalThis & { __trenchantPeerHeader?: boolean };

/**
 * Makes every HTTP request of this process carry PEER_ADDRESS_HEADER = the socket's remote address (overwriting
 * whatever the client sent). Called once at server start from instrumentation.ts, before requests are served.
 */
export async function installPeerAddressHeader(): Promise<void> {
  if (holder.__trenchantPeerHeader) return;
  holder.__trenchantPeerHeader = true;
  const http = await import('node:http');
  const original = http.Server.prototype.emit;
  http.Server.prototype.emit = function emitWithPeer(this: unknown, event: string | symbol, ...args: unknown[]) {
    if (event === 'request') {
      const req = args[0] as IncomingMessage | undefined;
      if (req?.headers) req.headers[PEER_ADDRESS_HEADER] = req.socket?.remoteAddress ?? 'unknown';
    }
    return (original as (this: unknown, event: string | symbol, ...rest: unknown[]) => boolean).call(this, event, ...args);
  } as typeof original;
}

/** Normalises an address so IPv4-mapped IPv6 ("::ffff:1.2.3.4") and "1.2.3.4" count as one client. */
function normalise(address: string): string {
  const a = address.trim().toLowerCase();
  return a.startsWith('::ffff:') && a.includes('.') ? a.slice(7) : a;
}

/**
 * The client address a request came from, for rate limits. Behind a reverse proxy (TRENCHANT_TRUST_PROXY=1) the
 * last X-Forwarded-For entry, which the nearest proxy appended; otherwise the TCP peer. 'unknown' when neither is
 * known (then all such requests share one limit, which errs on the safe side).
 */
export function clientAddress(headers: Headers): string {
  if (process.env.TRENCHANT_TRUST_PROXY === '1') {
    const last = headers.get('x-forwarded-for')?.split(',').at(-1)?.trim();
    if (last) return normalise(last);
  }
  const peer = headers.get(PEER_ADDRESS_HEADER);
  return peer ? normalise(peer) : 'unknown';
}
