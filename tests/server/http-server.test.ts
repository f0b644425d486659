// Tidemark's own HTTP server (server/app.mjs), on a real socket with a
// stand-in request handler: the client's address, cross-origin refusals,
// body limits (413 with its message, memory not grown), early refusals of
// streamed uploads arriving as answers, security headers, and a client going
// away costing no stack trace.
import http from "node:http";
import type { AddressInfo } from "node:net";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
// @ts-expect-error plain JavaScript module without types
import { clientAddressOf, createServerApp, FORM_MAX_BYTES, JSON_MAX_BYTES, trustedProxyList } from "../../server/app.mjs";

type Seen = { peer: string | null; bodyBytes: number; url: string };
let seen: Seen[] = [];
let server: http.Server;
let port = 0;

async function handler(request: Request): Promise<Response> {
  const url = new URL(request.url);
  if (url.pathname === "/slow-page") {
    // A long streamed page, as a big HTML document would be.
    let n = 0;
    const body = new ReadableStream({
      async pull(controller) {
        n += 1;
        if (n > 2000) return controller.close();
        await new Promise((r) => setTimeout(r, 2));
        controller.enqueue(new TextEncoder().encode("x".repeat(16_384)));
      },
    });
    return new Response(body, { headers: { "Content-Type": "text/html" } });
  }
  if (/\/mixes$/.test(url.pathname)) {
    // The upload route reads past its limit (1 MB here), then stops reading and refuses.
    const reader = request.body!.getReader();
    for (let read = 0; read <= 1024 * 1024; ) {
      const { done, value } = await reader.read();
      if (done) break;
      read += value.byteLength;
    }
    await reader.cancel();
    return Response.json({ error: "The file is larger than the upload limit of 1 MB." }, { status: 413 });
  }
  const bytes = request.body ? (await request.arrayBuffer()).byteLength : 0;
  seen.push({ peer: request.headers.get("x-tidemark-peer"), bodyBytes: bytes, url: url.pathname });
  return new Response("ok", { headers: { "Content-Type": "text/plain" } });
}

beforeAll(async () => {
  const app = createServerApp({ handler, trustedProxies: "10.0.0.0/8", compress: false });
  server = app.listen(0, "127.0.0.1");
  await new Promise((r) => server.once("listening", r));
  port = (server.address() as AddressInfo).port;
});
afterAll(async () => {
  server.closeAllConnections();
  await new Promise((r) => server.close(r));
});

type Sent = { status: number; headers: http.IncomingHttpHeaders; body: string; error?: string };
function send(path: string, init: { method?: string; headers?: Record<string, string>; body?: Buffer | (() => AsyncIterable<Buffer>) } = {}): Promise<Sent> {
  return new Promise((resolve) => {
    const req = http.request({ host: "127.0.0.1", port, path, method: init.method ?? "GET", headers: init.headers });
    req.on("response", (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks).toString() }));
      res.on("error", (e) => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: "", error: e.message }));
    });
    req.on("error", (e) => resolve({ status: 0, headers: {}, body: "", error: e.message }));
    if (typeof init.body === "function") {
      (async () => {
        try {
          const source = init.body as () => AsyncIterable<Buffer>;
          for await (const chunk of source()) {
            if (req.destroyed) return;
            if (!req.write(chunk)) await new Promise((r) => req.once("drain", r));
          }
          req.end();
        } catch {
          // the server stopped reading
        }
      })();
    } else req.end(init.body);
  });
}

async function* chunked(totalBytes: number, chunkBytes = 64 * 1024) {
  const chunk = Buffer.alloc(chunkBytes, 120);
  for (let sent = 0; sent < totalBytes; sent += chunkBytes) yield chunk;
}

describe("the client's address", () => {
  const trusted = trustedProxyList("10.0.0.0/8, loopback");
  it("is the socket's peer; X-Forwarded-For counts only from a trusted proxy, right-most untrusted hop", () => {
    expect(clientAddressOf("203.0.113.5", "1.2.3.4", trusted)).toBe("203.0.113.5");
    expect(clientAddressOf("::ffff:203.0.113.5", undefined, trusted)).toBe("203.0.113.5");
    expect(clientAddressOf("10.1.1.1", "6.6.6.6, 198.51.100.2", trusted)).toBe("198.51.100.2");
    expect(clientAddressOf("10.1.1.1", "6.6.6.6, 198.51.100.2, 10.2.2.2", trusted)).toBe("198.51.100.2");
    expect(clientAddressOf("127.0.0.1", "garbage, 198.51.100.2", trusted)).toBe("198.51.100.2");
    expect(clientAddressOf("10.1.1.1", "not-an-address", trusted)).toBe("10.1.1.1");
  });

  it("reaches the app in its own header, whatever the client wrote there", async () => {
    seen = [];
    await send("/x", { headers: { "X-Tidemark-Peer": "6.6.6.6", "X-Forwarded-For": "7.7.7.7" } });
    expect(seen[0].peer).toBe("127.0.0.1");
  });
});

describe("requests from another origin", () => {
  it("refuses unsafe methods from another site, lets same-origin and non-browser clients through", async () => {
    const host = `127.0.0.1:${port}`;
    const form = { "Content-Type": "application/x-www-form-urlencoded" };
    expect((await send("/sign-out", { method: "POST", headers: { ...form, Origin: "https://evil.example" }, body: Buffer.from("a=1") })).status).toBe(403);
    expect((await send("/sign-out", { method: "POST", headers: { ...form, "Sec-Fetch-Site": "cross-site" }, body: Buffer.from("a=1") })).status).toBe(403);
    expect((await send("/sign-out", { method: "POST", headers: { ...form, Origin: "null" }, body: Buffer.from("a=1") })).status).toBe(403);
    expect((await send("/sign-out", { method: "POST", headers: { ...form, Origin: `http://${host}`, "Sec-Fetch-Site": "same-origin" }, body: Buffer.from("a=1") })).status).toBe(200);
    expect((await send("/api/renders", { method: "POST", headers: { "Content-Type": "application/json" }, body: Buffer.from("{}") })).status).toBe(200);
    // The payments webhook is called by a server and checked by its signature.
    expect((await send("/api/payments/webhook", { method: "POST", headers: { Origin: "https://payments.example" }, body: Buffer.from("{}") })).status).toBe(200);
    // Reading is never refused.
    expect((await send("/releases", { headers: { "Sec-Fetch-Site": "cross-site" } })).status).toBe(200);
  });
});

describe("body limits", () => {
  it("answers 413 with the message from Content-Length alone, before reading", async () => {
    seen = [];
    const declared = await send("/api/renders", { method: "POST", headers: { "Content-Type": "application/json", "Content-Length": String(300 * 1024 * 1024) }, body: () => chunked(2 * 1024 * 1024) });
    expect(declared.status).toBe(413);
    expect(JSON.parse(declared.body).error).toMatch(/larger than the 1 MB allowed for JSON/);
    expect(seen).toHaveLength(0);
  });

  it("answers 413 while reading a chunked body past the limit, and the process does not grow with it", async () => {
    seen = [];
    const before = process.memoryUsage().rss;
    const results = await Promise.all(
      Array.from({ length: 8 }, (_, i) =>
        send(i % 2 ? "/settings" : "/api/payments/webhook", { method: "POST", headers: { "Content-Type": i % 2 ? "application/x-www-form-urlencoded" : "application/json" }, body: () => chunked(12 * 1024 * 1024) }),
      ),
    );
    for (const [i, result] of results.entries()) {
      expect(result.status, result.error).toBe(413);
      expect(result.body).toMatch(i % 2 ? /64 KB allowed for a form/ : /1 MB allowed for JSON/);
    }
    expect(seen).toHaveLength(0);
    // 8 × 12 MB were sent; the server held at most a limit's worth of each.
    expect(process.memoryUsage().rss - before).toBeLessThan(100 * 1024 * 1024);
  });

  it("passes bodies within the limits whole", async () => {
    seen = [];
    await send("/settings", { method: "POST", headers: { "Content-Type": "application/x-www-form-urlencoded" }, body: Buffer.alloc(FORM_MAX_BYTES, 97) });
    await send("/api/chains", { method: "POST", headers: { "Content-Type": "application/json" }, body: () => chunked(JSON_MAX_BYTES, 1024) });
    expect(seen.map((s) => s.bodyBytes)).toEqual([FORM_MAX_BYTES, JSON_MAX_BYTES]);
  });

  it("delivers an upload route's early refusal as an answer, not a reset, while the client is still sending", async () => {
    const result = await send("/releases/r/tracks/t/mixes", { method: "POST", headers: { "Content-Type": "audio/wav" }, body: () => chunked(64 * 1024 * 1024) });
    expect(result.error).toBeUndefined();
    expect(result.status).toBe(413);
    expect(JSON.parse(result.body).error).toMatch(/upload limit/);
  });
});

describe("every answer", () => {
  it("carries the security headers", async () => {
    const { headers } = await send("/");
    expect(headers["content-security-policy"]).toMatch(/frame-ancestors 'none'/);
    expect(headers["content-security-policy"]).toMatch(/worker-src 'self' blob:/);
    expect(headers["x-content-type-options"]).toBe("nosniff");
    expect(headers["referrer-policy"]).toBe("same-origin");
    expect(headers["x-powered-by"]).toBeUndefined();
  });

  it("logs nothing when a client goes away in the middle of a page", async () => {
    const errors = vi.spyOn(console, "error");
    await new Promise<void>((resolve) => {
      const req = http.get({ host: "127.0.0.1", port, path: "/slow-page" }, (res) => {
        res.once("data", () => {
          req.destroy();
          setTimeout(resolve, 300);
        });
      });
      req.on("error", () => {});
    });
    expect(errors).not.toHaveBeenCalled();
    errors.mockRestore();
  });
});
