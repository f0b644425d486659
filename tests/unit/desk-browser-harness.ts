// A page for driving the desk's worklet in Debian's chromium (playwright-core)
// through Vite's dev server: used by the parity test and by the bench. The
// page loads the mix with the desk's own loader (byte ranges, pre-roll) and
// runs the worklet in an OfflineAudioContext (parity, speed) or a real
// AudioContext (real-time play: dropped and late blocks).
import { existsSync } from "node:fs";
import { mkdtemp, rm, symlink, unlink, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import type { Browser, Page } from "playwright-core";

export const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
export const haveChromium = existsSync(CHROMIUM);

export interface DeskHarness {
  dir: string;
  page: Page;
  /** Worklet output over the region (planar float32) and the wall time of startRendering. */
  offline(url: string, region: { startS: number; endS: number }, chain: unknown, frames: number): Promise<{ channels: Float32Array[]; renderMs: number; sampleRate: number }>;
  /** Plays in real time for `seconds`, returns the worklet's counters. */
  live(url: string, region: { startS: number; endS: number }, chain: unknown, seconds: number): Promise<{ droppedBlocks: number; lateBlocks: number; meters: number; momentaryLufs: number; sampleRate: number }>;
  close(): Promise<void>;
}

const PAGE = (engine: string, worklet: string, protocol: string) => `
import { loadDeskAudio, DeskEngine } from ${JSON.stringify(engine)};
import workletUrl from ${JSON.stringify(worklet + "?worker&url")};
import { DESK_PROCESSOR } from ${JSON.stringify(protocol)};
const b64 = (f) => { const u = new Uint8Array(f.buffer, f.byteOffset, f.byteLength); let s = ""; for (let i = 0; i < u.length; i += 32768) s += String.fromCharCode(...u.subarray(i, i + 32768)); return btoa(s); };
window.deskOffline = async (url, region, chain, frames) => {
  const loaded = await loadDeskAudio({ url }, region);
  const ctx = new OfflineAudioContext({ numberOfChannels: 2, length: frames, sampleRate: loaded.sampleRate });
  await ctx.audioWorklet.addModule(workletUrl);
  const node = new AudioWorkletNode(ctx, DESK_PROCESSOR, { numberOfInputs: 0, numberOfOutputs: 1, outputChannelCount: [2] });
  node.connect(ctx.destination);
  await new Promise((res, rej) => {
    node.port.onmessage = (e) => (e.data.type === "ready" ? res() : e.data.type === "error" ? rej(new Error(e.data.message)) : 0);
    node.port.postMessage({ type: "load", channels: loaded.channels, audio: loaded.audio, audioStartFrame: loaded.audioStartFrame, regionStartFrame: loaded.regionStartFrame, regionEndFrame: loaded.regionEndFrame, chain, playing: true, match: false });
  });
  const t0 = performance.now();
  const buf = await ctx.startRendering();
  const renderMs = performance.now() - t0;
  return { channels: [b64(buf.getChannelData(0)), b64(buf.getChannelData(1))], renderMs, sampleRate: loaded.sampleRate };
};
window.deskLive = async (url, region, chain, seconds) => {
  const engine = await DeskEngine.open({ url }, region, chain);
  let meters = 0, last = null;
  engine.onMeters((m) => { meters++; last = m; });
  await engine.play();
  await new Promise((r) => setTimeout(r, seconds * 1000));
  engine.pause();
  await new Promise((r) => setTimeout(r, 200));
  const out = { droppedBlocks: last?.droppedBlocks ?? -1, lateBlocks: last?.lateBlocks ?? -1, meters, momentaryLufs: last?.momentaryLufs ?? NaN, sampleRate: engine.sampleRate };
  await engine.close();
  return out;
};
window.harnessReady = true;
`;

export async function openDeskHarness(files: Record<string, Buffer>): Promise<DeskHarness> {
  const dir = await mkdtemp(join(tmpdir(), "tidemark-desk-"));
  await symlink(resolve("node_modules"), join(dir, "node_modules"), "dir");
  for (const [name, data] of Object.entries(files)) await writeFile(join(dir, name), data);
  await writeFile(join(dir, "index.html"), `<!doctype html><html><head><meta charset="utf-8"></head><body><script type="module" src="/main.ts"></script></body></html>`);
  await writeFile(join(dir, "main.ts"), PAGE(resolve("app/desk/engine/desk-engine.ts"), resolve("app/desk/engine/desk-worklet.ts"), resolve("app/desk/engine/protocol.ts")));
  const { createServer } = await import("vite");
  const server = await createServer({
    configFile: false,
    root: dir,
    logLevel: "error",
    server: { host: "127.0.0.1", port: 0, fs: { allow: [dir, process.cwd()] } },
    optimizeDeps: { entries: [join(dir, "main.ts")], include: ["fft.js"] }, // fft.js (resonance stage) is CommonJS: pre-bundled up front, or its late discovery reloads the page
  });
  await server.listen();
  const { chromium } = await import("playwright-core");
  let browser: Browser | undefined;
  try {
    browser = await chromium.launch({ executablePath: CHROMIUM, args: ["--no-sandbox", "--disable-gpu", "--autoplay-policy=no-user-gesture-required"] });
    const page = await browser.newPage();
    page.on("pageerror", (e) => console.error("page error:", e.message));
    await page.goto(server.resolvedUrls!.local[0]);
    await page.waitForFunction(() => (window as unknown as { harnessReady?: boolean }).harnessReady === true, null, { timeout: 120_000 });
    const unb64 = (s: string) => {
      const b = Buffer.from(s, "base64");
      return new Float32Array(b.buffer.slice(b.byteOffset, b.byteOffset + b.byteLength));
    };
    return {
      dir,
      page,
      async offline(url, region, chain, frames) {
        const r = await page.evaluate(([u, g, c, f]) => (window as unknown as { deskOffline: (...a: unknown[]) => Promise<{ channels: string[]; renderMs: number; sampleRate: number }> }).deskOffline(u, g, c, f), [url, region, chain, frames] as const);
        return { channels: r.channels.map(unb64), renderMs: r.renderMs, sampleRate: r.sampleRate };
      },
      async live(url, region, chain, seconds) {
        return page.evaluate(([u, g, c, s]) => (window as unknown as { deskLive: (...a: unknown[]) => Promise<{ droppedBlocks: number; lateBlocks: number; meters: number; momentaryLufs: number; sampleRate: number }> }).deskLive(u, g, c, s), [url, region, chain, seconds] as const);
      },
      async close() {
        await browser?.close();
        await server.close();
        await unlink(join(dir, "node_modules")).catch(() => {});
        await rm(dir, { recursive: true, force: true });
      },
    };
  } catch (err) {
    await browser?.close();
    await server.close();
    await unlink(join(dir, "node_modules")).catch(() => {});
    await rm(dir, { recursive: true, force: true });
    throw err;
  }
}
