// What the production server (scripts/serve.ts) tells the app about a request, beyond the Request itself.
// The server resolves the client address once (the socket's peer, or X-Forwarded-For only when that peer is a
// proxy listed in TRUST_PROXY) and always overwrites this header with it, so a value sent by the client never
// arrives here. Under the Vite dev server the header is absent and the address is unknown.
export const CLIENT_ADDRESS_HEADER = "x-limberly-client-address";

export function clientAddress(request: Request): string | null {
  return request.headers.get(CLIENT_ADDRESS_HEADER) || null;
}

declare module "react-router" {
  interface AppLoadContext {
    /** This response's Content-Security-Policy nonce, for React Router's inline scripts. */
    cspNonce?: string;
  }
}
