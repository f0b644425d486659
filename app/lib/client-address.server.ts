// The client's address. Tidemark's own server (server/app.mjs) takes it from
// the socket, or from X-Forwarded-For when the socket is a configured proxy
// (the right-most hop that is not one), and hands it to the app in this
// header, after deleting any copy the client sent. Served another way (the
// development server, a test calling a route), there is none: null.
export const PEER_HEADER = "x-tidemark-peer";

export function clientAddress(request: Request): string | null {
  const value = request.headers.get(PEER_HEADER)?.trim();
  return value && value.length <= 64 ? value : null;
}
