// `npm run bench -- load`: the web server under load on loopback. Builds
// nothing: run `npx react-router build` first. Starts server/main.mjs on a
// free port against DATABASE_URL (the demo data), signs in as the demo owner,
// and for the dashboard, a release page, GET /api/releases and a compare
// page prints requests/s, latency percentiles (autocannon gives p90 and
// p97.5, not p95), the HTML size and the web process's memory before, at
// the peak and after. LOAD_CONNECTIONS (50) and LOAD_SECONDS (20) bound it.
import { spawn } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";
import autocannon from "autocannon";

const root = path.resolve(import.meta.dirname, "..");
const port = 3990 + Number(process.env.TIDEMARK_PORT_OFFSET ?? 0);
const base = `http://127.0.0.1:${port}`;
const connections = Number(process.env.LOAD_CONNECTIONS ?? 50);
const seconds = Number(process.env.LOAD_SECONDS ?? 20);

const rssMb = (pid: number) => Number(readFileSync(`/proc/${pid}/status`, "utf8").match(/VmRSS:\s+(\d+)/)?.[1] ?? 0) / 1024;

export async function run(): Promise<void> {
  if (!process.env.DATABASE_URL) throw new Error("set DATABASE_URL (e.g. source the exports of `node scripts/test.mjs --services`)");
  const web = spawn(process.execPath, ["server/main.mjs", "./build/server/index.js"], {
    cwd: root,
    env: { ...process.env, NODE_ENV: "production", PORT: String(port), HOST: "127.0.0.1", TIDEMARK_INSECURE_COOKIES: "1" },
    stdio: ["ignore", "inherit", "pipe"],
  });
  let stderr = "";
  web.stderr.on("data", (c) => (stderr += c));
  try {
    for (let i = 0; i < 100; i++) {
      if (await fetch(`${base}/sign-in`).then((r) => r.ok, () => false)) break;
      await new Promise((r) => setTimeout(r, 300));
    }
    const signIn = await fetch(`${base}/sign-in`, {
      method: "POST",
      redirect: "manual",
      headers: { "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams({ email: "owner@lanternquay.test", password: "tidemark-demo", redirectTo: "/" }),
    });
    const cookie = (signIn.headers.get("set-cookie") ?? "").split(";")[0];
    if (!cookie) throw new Error(`sign-in failed (${signIn.status})`);
    const releases = (await (await fetch(`${base}/api/releases`, { headers: { Cookie: cookie } })).json()) as { releases?: { id: string }[]; items?: { id: string }[] };
    const releaseId = (releases.releases ?? releases.items ?? [])[0]?.id;
    const tracks = (await (await fetch(`${base}/api/releases/${releaseId}/tracks`, { headers: { Cookie: cookie } })).json()) as { tracks?: { id: string }[]; items?: { id: string }[] };
    const trackId = (tracks.tracks ?? tracks.items ?? [])[0]?.id;
    const pages = [
      ["dashboard", "/"],
      ["release page", `/releases/${releaseId}`],
      ["GET /api/releases", "/api/releases"],
      ["compare page", `/releases/${releaseId}/tracks/${trackId}/compare`],
    ] as const;
    const startMb = rssMb(web.pid!);
    console.log(`web process at start: ${startMb.toFixed(0)} MB; ${connections} connections, ${seconds} s each (shared machine: figures are noisy)`);
    let peakMb = startMb;
    for (const [name, url] of pages) {
      const html = await (await fetch(`${base}${url}`, { headers: { Cookie: cookie } })).text();
      const sampler = setInterval(() => (peakMb = Math.max(peakMb, rssMb(web.pid!))), 250);
      // The API's own limit (per member) would answer 429s here: it is a page-load figure, not a limit test.
      const result = await autocannon({ url: `${base}${url}`, connections, duration: seconds, headers: { Cookie: cookie } });
      clearInterval(sampler);
      const non2xx = result.non2xx;
      console.log(
        `${name.padEnd(18)} ${result.requests.average.toFixed(0).padStart(5)} req/s  p50 ${result.latency.p50} ms  p90 ${result.latency.p90} ms  p97.5 ${result.latency.p97_5} ms  ` +
          `HTML ${(html.length / 1024).toFixed(0)} KB  non-2xx ${non2xx}  errors ${result.errors}`,
      );
    }
    await new Promise((r) => setTimeout(r, 5000));
    (globalThis as { gc?: () => void }).gc?.();
    console.log(`web memory: start ${startMb.toFixed(0)} MB, peak ${peakMb.toFixed(0)} MB, 5 s after ${rssMb(web.pid!).toFixed(0)} MB`);
    const traces = stderr.split("\n").filter((line) => /^\s+at /.test(line)).length;
    console.log(`stack-trace lines in the web log: ${traces}`);
  } finally {
    web.kill("SIGTERM");
  }
}
