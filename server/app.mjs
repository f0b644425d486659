// Tidemark's own HTTP server in front of the React Router request handler:
// plain Node and express (for static files and compression), so the things a
// web framework cannot see are decided here, before a route runs:
//   - the client's address, from the socket (X-Forwarded-For only from
//     configured proxies, the right-most hop that is not one), handed to the
//     app in the x-tidemark-peer header;
//   - unsafe methods from another origin refused (Sec-Fetch-Site, Origin);
//   - body limits: 64 KB for forms, 1 MB for JSON and the payments webhook,
//     checked against Content-Length and while reading (413); uploads stream
//     through to their route, which enforces UPLOAD_MAX_BYTES itself, and a
//     refusal it sends early reaches the client as a response, not a reset;
//   - security headers on every response;
//   - a client that goes away mid-answer costs no stack trace.
import express from "express";
import compression from "compression";
import path from "node:path";
import { BlockList, isIP } from "node:net";
import { once } from "node:events";

export const PEER_HEADER = "x-tidemark-peer";
export const FORM_MAX_BYTES = 64 * 1024;
export const JSON_MAX_BYTES = 1024 * 1024;
/** How long, and how much, the rest of a refused body is read and thrown away so the client sees the answer. */
const DRAIN_MS = 10_000;

/**
 * Routes whose body is a file: streamed to the route, limited by
 * UPLOAD_MAX_BYTES there. A new upload route adds its path here.
 */
export const UPLOAD_PATHS = [
  /^\/releases\/[^/]+\/tracks\/[^/]+\/mixes\/?$/,
  /^\/api\/tracks\/[^/]+\/mixes\/?$/,
  /\/references?\/?$/,
  /\/reference-tracks\/?$/,
];

/** Routes that take JSON bodies of up to JSON_MAX_BYTES; every other body is a form of FORM_MAX_BYTES. */
export const JSON_PATHS = [/^\/api\//];

const UNSAFE_METHODS = new Set(["POST", "PUT", "PATCH", "DELETE"]);
/** Called by servers, not browsers, and checked by their own signature. */
const CROSS_ORIGIN_EXEMPT = [/^\/api\/payments\/webhook\/?$/];

/**
 * The proxies whose X-Forwarded-For is believed: a comma-separated list of
 * addresses and CIDR ranges, or "loopback" (127.0.0.0/8 and ::1).
 */
export function trustedProxyList(spec = "") {
  const list = new BlockList();
  for (const raw of spec.split(",").map((s) => s.trim()).filter(Boolean)) {
    if (raw === "loopback") {
      list.addSubnet("127.0.0.0", 8, "ipv4");
      list.addAddress("::1", "ipv6");
      continue;
    }
    const [address, bits] = raw.split("/");
    const family = isIP(address);
    if (!family) throw new Error(`TIDEMARK_TRUSTED_PROXIES: "${raw}" is not an address or range`);
    const type = family === 6 ? "ipv6" : "ipv4";
    if (bits === undefined) list.addAddress(address, type);
    else list.addSubnet(address, Number(bits), type);
  }
  return list;
}

function plainAddress(address) {
  if (!address) return "";
  return address.startsWith("::ffff:") && isIP(address.slice(7)) === 4 ? address.slice(7) : address;
}

function isTrusted(list, address) {
  const family = isIP(address);
  return family !== 0 && list.check(address, family === 6 ? "ipv6" : "ipv4");
}

/**
 * The client's address: the socket's peer, unless the peer is a trusted
 * proxy; then X-Forwarded-For is read from the right (each proxy appends the
 * address it saw) past the trusted hops; the first untrusted one is the
 * client. Hops left of it were written by the client and are ignored.
 */
export function clientAddressOf(remoteAddress, forwardedFor, trusted) {
  let address = plainAddress(remoteAddress);
  if (!forwardedFor || !isTrusted(trusted, address)) return address;
  const hops = forwardedFor.split(",").map((hop) => plainAddress(hop.trim())).reverse();
  for (const hop of hops) {
    if (!isIP(hop)) break;
    address = hop;
    if (!isTrusted(trusted, hop)) break;
  }
  return address;
}

/**
 * The content security policy: everything from our own origin. Scripts and
 * workers may also come from blob: (audio worklets and workers built in the
 * page); 'unsafe-inline' for scripts because React Router's hydration data is
 * an inline script (no nonce plumbing yet), styles for the inline style
 * attributes React writes.
 */
export const CONTENT_SECURITY_POLICY = [
  "default-src 'self'",
  "script-src 'self' 'unsafe-inline' blob:",
  "worker-src 'self' blob:",
  "style-src 'self' 'unsafe-inline'",
  "img-src 'self' data: blob:",
  "font-src 'self' data:",
  "media-src 'self' blob:",
  "connect-src 'self'",
  "object-src 'none'",
  "base-uri 'self'",
  "form-action 'self'",
  "frame-ancestors 'none'",
].join("; ");

export const SECURITY_HEADERS = {
  "Content-Security-Policy": CONTENT_SECURITY_POLICY,
  "X-Content-Type-Options": "nosniff",
  "Referrer-Policy": "same-origin",
  "X-Frame-Options": "DENY",
  "Cross-Origin-Opener-Policy": "same-origin",
  "Permissions-Policy": "camera=(), geolocation=(), payment=()",
};

/** Why an unsafe request from another origin is refused, or null when it may go on. */
export function crossOriginRefusal(method, pathname, headers) {
  if (!UNSAFE_METHODS.has(method) || CROSS_ORIGIN_EXEMPT.some((re) => re.test(pathname))) return null;
  const site = headers["sec-fetch-site"];
  if (site && site !== "same-origin" && site !== "none") return `A ${method} from another site (${site}) is refused.`;
  const origin = headers.origin;
  if (origin) {
    let host = null;
    try {
      host = origin === "null" ? null : new URL(origin).host;
    } catch {
      host = null;
    }
    if (host === null || host !== headers.host) return `A ${method} from another origin is refused.`;
  }
  // No Origin and no Sec-Fetch-Site: not a browser's cross-site request (scripts, curl).
  return null;
}

/** Which body a request may carry: an upload (streamed), JSON, or a form, and how large. */
export function bodyKindOf(pathname, uploadMaxBytes) {
  if (UPLOAD_PATHS.some((re) => re.test(pathname))) return { kind: "upload", maxBytes: uploadMaxBytes };
  if (JSON_PATHS.some((re) => re.test(pathname))) return { kind: "json", maxBytes: JSON_MAX_BYTES };
  return { kind: "form", maxBytes: FORM_MAX_BYTES };
}

function formatLimit(bytes) {
  return bytes >= 1024 * 1024 ? `${Math.round(bytes / (1024 * 1024))} MB` : `${Math.round(bytes / 1024)} KB`;
}

function refuse(req, res, status, message) {
  if (res.headersSent) {
    res.destroy();
    return;
  }
  const wantsJson = req.path.startsWith("/api/") || (req.headers.accept ?? "").includes("application/json");
  res.status(status);
  if (status === 413) res.setHeader("Connection", "close");
  if (wantsJson) res.json({ error: message });
  else res.type("text/plain; charset=utf-8").send(message);
  drainRest(req, res);
}

/**
 * After an answer sent before the body was read, the rest is read and
 * thrown away for a while, so the client (still sending) reads the answer
 * instead of meeting a reset; then the connection is closed.
 */
function drainRest(req, res) {
  req.stopUpload?.();
  if (req.complete || req.destroyed) return;
  res.shouldKeepAlive = false;
  const timer = setTimeout(() => req.destroy(), DRAIN_MS);
  timer.unref();
  req.on("end", () => clearTimeout(timer));
  req.on("error", () => clearTimeout(timer));
  req.resume();
}

/** Reads a small body into memory, refusing it past maxBytes; undefined when refused. */
async function readLimited(req, res, maxBytes, kind) {
  const chunks = [];
  let total = 0;
  try {
    for await (const chunk of req) {
      total += chunk.length;
      if (total > maxBytes) {
        refuse(req, res, 413, `The request body is larger than the ${formatLimit(maxBytes)} allowed for ${kind === "json" ? "JSON" : "a form"}.`);
        return undefined;
      }
      chunks.push(chunk);
    }
  } catch {
    // The client went away while sending.
    return undefined;
  }
  return Buffer.concat(chunks, total);
}

/**
 * An upload's body as a web stream that never destroys the socket: when the
 * route stops reading (it refused the file), the rest is drained instead,
 * so the client gets the route's answer.
 */
function uploadBody(req) {
  let done = false;
  const onData = (chunk) => {
    if (done) return;
    controllerRef.enqueue(new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.length));
    if (controllerRef.desiredSize <= 0) req.pause();
  };
  let controllerRef;
  // Called once the route has answered: whatever it left unread is drained, not queued.
  req.stopUpload = () => {
    done = true;
    req.off("data", onData);
  };
  return new ReadableStream(
    {
      start(controller) {
        controllerRef = controller;
        req.on("data", onData);
        req.once("end", () => {
          if (!done) controller.close();
          done = true;
        });
        req.once("error", (error) => {
          if (!done) controller.error(error);
          done = true;
        });
      },
      pull() {
        req.resume();
      },
      cancel() {
        done = true;
        req.off("data", onData);
      },
    },
    { highWaterMark: 8 },
  );
}

function requestHeaders(req, peer) {
  const headers = new Headers();
  for (let i = 0; i < req.rawHeaders.length; i += 2) {
    const name = req.rawHeaders[i];
    if (name.toLowerCase() === PEER_HEADER) continue;
    headers.append(name, req.rawHeaders[i + 1]);
  }
  if (peer) headers.set(PEER_HEADER, peer);
  return headers;
}

/** Writes a fetch Response to Node's response; a client going away ends it quietly. */
async function sendResponse(req, res, response, controller) {
  res.statusCode = response.status;
  if (response.statusText) res.statusMessage = response.statusText;
  for (const [name, value] of response.headers) {
    if (name === "set-cookie") continue;
    res.setHeader(name, value);
  }
  const cookies = response.headers.getSetCookie();
  if (cookies.length > 0) res.setHeader("Set-Cookie", cookies);
  if (!response.body || req.method === "HEAD") {
    res.end();
    await response.body?.cancel().catch(() => {});
    return;
  }
  const reader = response.body.getReader();
  let gone = false;
  const onClose = () => {
    if (res.writableFinished) return;
    gone = true;
    controller.abort();
    reader.cancel().catch(() => {});
  };
  res.on("close", onClose);
  try {
    while (!gone) {
      const { done, value } = await reader.read();
      if (done) break;
      if (!res.write(value)) await Promise.race([once(res, "drain"), once(res, "close")]);
    }
    if (!gone) res.end();
  } catch (error) {
    if (gone) return;
    console.error("[tidemark] response stream failed", error);
    res.destroy();
  } finally {
    res.off("close", onClose);
  }
}

/**
 * The express app. `handler(request)` answers a fetch Request (React Router's
 * request handler, or a stand-in in tests); `assetsDir` serves the client build.
 */
export function createServerApp({ handler, assetsDir, trustedProxies = "", uploadMaxBytes = 2 * 1000 ** 3, compress = true }) {
  const trusted = trustedProxyList(trustedProxies);
  const app = express();
  app.disable("x-powered-by");
  app.set("etag", false);

  app.use((req, res, next) => {
    for (const [name, value] of Object.entries(SECURITY_HEADERS)) res.setHeader(name, value);
    next();
  });
  if (compress) app.use(compression());
  if (assetsDir) {
    // Vite's fingerprinted files never change; the rest for an hour.
    app.use("/assets", express.static(path.join(assetsDir, "assets"), { immutable: true, maxAge: "1y", index: false }));
    app.use(express.static(assetsDir, { maxAge: "1h", index: false }));
  }

  app.all(/.*/, async (req, res) => {
    const peer = clientAddressOf(req.socket.remoteAddress, req.headers["x-forwarded-for"], trusted);
    const refusal = crossOriginRefusal(req.method, req.path, req.headers);
    if (refusal) return refuse(req, res, 403, refusal);

    let body;
    if (req.method !== "GET" && req.method !== "HEAD") {
      const { kind, maxBytes } = bodyKindOf(req.path, uploadMaxBytes);
      const declared = Number(req.headers["content-length"]);
      if (kind !== "upload") {
        if (Number.isFinite(declared) && declared > maxBytes) {
          return refuse(req, res, 413, `The request body is larger than the ${formatLimit(maxBytes)} allowed for ${kind === "json" ? "JSON" : "a form"}.`);
        }
        body = await readLimited(req, res, maxBytes, kind);
        if (body === undefined) return;
      } else {
        body = uploadBody(req);
      }
    }

    const proto = isTrusted(trusted, plainAddress(req.socket.remoteAddress)) && req.headers["x-forwarded-proto"] === "https" ? "https" : "http";
    const url = new URL(req.originalUrl, `${proto}://${req.headers.host ?? "localhost"}`);
    const controller = new AbortController();
    res.on("close", () => {
      if (!res.writableFinished) controller.abort();
    });
    const request = new Request(url, {
      method: req.method,
      headers: requestHeaders(req, peer),
      body,
      signal: controller.signal,
      ...(body instanceof ReadableStream ? { duplex: "half" } : {}),
    });

    let response;
    try {
      response = await handler(request);
    } catch (error) {
      if (controller.signal.aborted) return;
      console.error("[tidemark] request failed", error);
      if (!res.headersSent) res.status(500).type("text/plain").send("Something went wrong on the server.");
      return;
    }
    if (controller.signal.aborted) {
      await response.body?.cancel().catch(() => {});
      return;
    }
    await sendResponse(req, res, response, controller);
    // An upload answered before its body was read (a refusal): let the client read the answer.
    if (body instanceof ReadableStream) drainRest(req, res);
  });

  return app;
}
