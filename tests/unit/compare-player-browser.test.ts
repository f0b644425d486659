// The A/B player in a real browser (Debian's chromium through playwright-core):
// two synthesized WAV files 6 dB apart are fetched, decoded and played on the
// Web Audio API. Checks the monitoring notice before the first playback, the
// level-matching gain, instant switching by key at the same position, the
// loop chosen by dragging, and seeking from a comment marker; with two 90 s
// files, the progressive start (ready on the first 12 s, the rest swapped in
// while playing, waiting at the end of what has loaded). The page is
// served by Vite's dev server from a temporary folder (no app stylesheet, so
// the checks rely on no styling).
import { existsSync } from "node:fs";
import { mkdtemp, rm, symlink, unlink, writeFile } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join, resolve } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, Page } from "playwright-core";

const CHROMIUM = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
const SR = 48_000;
const SECONDS = 6;

/** A 44-byte stereo WAV header: format 1 (PCM) or 3 (IEEE float), `bits` per sample. */
function wavHeader(format: 1 | 3, bits: number, dataBytes: number): Buffer {
  const blockAlign = 2 * (bits / 8);
  const header = Buffer.alloc(44);
  header.write("RIFF", 0);
  header.writeUInt32LE(36 + dataBytes, 4);
  header.write("WAVEfmt ", 8);
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(format, 20);
  header.writeUInt16LE(2, 22);
  header.writeUInt32LE(SR, 24);
  header.writeUInt32LE(SR * blockAlign, 28);
  header.writeUInt16LE(blockAlign, 32);
  header.writeUInt16LE(bits, 34);
  header.write("data", 36);
  header.writeUInt32LE(dataBytes, 40);
  return header;
}

/** 16-bit stereo PCM WAV of a 1 kHz sine at `dbfs`. */
function sineWav(dbfs: number, seconds = SECONDS): Buffer {
  const frames = SR * seconds;
  const data = Buffer.alloc(frames * 4);
  const amp = Math.round(32767 * Math.pow(10, dbfs / 20));
  for (let i = 0; i < frames; i++) {
    const v = Math.round(amp * Math.sin((2 * Math.PI * 1000 * i) / SR));
    data.writeInt16LE(v, i * 4);
    data.writeInt16LE(v, i * 4 + 2);
  }
  return Buffer.concat([wavHeader(1, 16, data.length), data]);
}

/** The same sine as 64-bit float samples, which Chromium's own decoder refuses (the player converts them). */
function sineWavFloat64(dbfs: number, seconds = SECONDS): Buffer {
  const frames = SR * seconds;
  const data = Buffer.alloc(frames * 16);
  const amp = Math.pow(10, dbfs / 20);
  for (let i = 0; i < frames; i++) {
    const v = amp * Math.sin((2 * Math.PI * 1000 * i) / SR);
    data.writeDoubleLE(v, i * 16);
    data.writeDoubleLE(v, i * 16 + 8);
  }
  return Buffer.concat([wavHeader(3, 64, data.length), data]);
}

let dir: string;
let server: import("vite").ViteDevServer | undefined;
let browser: Browser | undefined;
let page: Page;

const attrs = () => page.getByTestId("ab-player").evaluate((el) => ({ ...(el as HTMLElement).dataset }));

describe.skipIf(!existsSync(CHROMIUM))("A/B player in chromium", () => {
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), "tidemark-player-"));
    const player = resolve("app/components/player/ab-player.tsx");
    const charts = resolve("app/components/player/trace-charts.tsx");
    const traces = resolve("app/lib/compare/traces.ts");
    // React and the rest resolve from the project's packages.
    await symlink(resolve("node_modules"), join(dir, "node_modules"), "dir");
    await writeFile(join(dir, "a.wav"), sineWav(-14));
    await writeFile(join(dir, "b.wav"), sineWav(-20));
    await writeFile(join(dir, "f64.wav"), sineWavFloat64(-20));
    // Long enough to be loaded in two steps (progressive-wav.ts): 12 s first, then the rest.
    await writeFile(join(dir, "long-a.wav"), sineWav(-14, 90));
    await writeFile(join(dir, "long-b.wav"), sineWav(-20, 90));
    await writeFile(join(dir, "index.html"), `<!doctype html><html><head><meta charset="utf-8"></head><body><div id="root" style="width:900px"></div><script type="module" src="/main.tsx"></script></body></html>`);
    await writeFile(
      join(dir, "main.tsx"),
      `import { createRoot } from "react-dom/client";
import { AbPlayer } from ${JSON.stringify(player)};
import { TraceCharts } from ${JSON.stringify(charts)};
import { alignTraces } from ${JSON.stringify(traces)};
const gr = (peakAt: number, n: number) => Array.from({ length: n }, (_, j) => (j === peakAt ? 5 : 0.5));
const aligned = alignTraces(
  { traces: { gridMs: 10, stages: [{ index: 2, type: "limit", names: ["gr"], gainReductionDb: [gr(250, 600)] }], shortTermLufs: Array(600).fill(-14) }, offsetS: 0 },
  { traces: { gridMs: 10, stages: [{ index: 2, type: "limit", names: ["gr"], gainReductionDb: [gr(50, 200)] }] }, offsetS: 2 },
);
// Records every value data-loaded takes, to see the player ready before the whole files are in.
(window as unknown as { loadedStates: string[] }).loadedStates = [];
new MutationObserver(() => {
  const v = document.querySelector("[data-testid=ab-player]")?.getAttribute("data-loaded");
  const seen = (window as unknown as { loadedStates: string[] }).loadedStates;
  if (v && seen.at(-1) !== v) seen.push(v);
}).observe(document.body, { subtree: true, attributes: true, childList: true });
createRoot(document.getElementById("root")!).render(
  location.search.includes("f64") ? (
    <AbPlayer a={{ url: "/a.wav", label: "16-bit" }} b={{ url: "/f64.wav", label: "64-bit float" }} />
  ) : location.search.includes("long") ? (
    <AbPlayer a={{ url: "/long-a.wav", label: "long louder", integratedLufs: -17 }} b={{ url: "/long-b.wav", label: "long quieter", integratedLufs: -23 }} />
  ) : (
  <>
    <AbPlayer a={{ url: "/a.wav", label: "louder" }} b={{ url: "/b.wav", label: "quieter" }} comments={[{ id: "c1", timeS: 2.5, body: "here" }]} />
    <TraceCharts aligned={aligned} positionS={1} labels={{ a: "louder", b: "quieter" }} />
  </>
  ),
);`,
    );
    const { createServer } = await import("vite");
    server = await createServer({
      configFile: false,
      root: dir,
      logLevel: "error",
      server: { host: "127.0.0.1", port: 0, fs: { allow: [dir, process.cwd()] } },
      resolve: { dedupe: ["react", "react-dom"] },
      optimizeDeps: { entries: [join(dir, "main.tsx")] },
    });
    await server.listen();
    const { chromium } = await import("playwright-core");
    browser = await chromium.launch({ executablePath: CHROMIUM, args: ["--no-sandbox", "--disable-gpu", "--autoplay-policy=no-user-gesture-required"] });
    page = await browser.newPage();
    await page.goto(server.resolvedUrls!.local[0]);
    await page.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-state") === "ready", null, { timeout: 60_000 });
  });

  afterAll(async () => {
    await browser?.close();
    await server?.close();
    if (dir) {
      // The link first, by itself, so removing the folder can never reach the project's packages.
      await unlink(join(dir, "node_modules")).catch(() => {});
      await rm(dir, { recursive: true, force: true });
    }
  });

  it("level-matches by default: the louder A is turned down by the measured 6 dB", async () => {
    await page.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-match-gain-db") !== "0.00");
    const gainDb = Number((await attrs()).matchGainDb);
    // 1 kHz sines 6 dB apart (EBU Tech 3341-style signals): the difference of their loudness is 6 dB.
    expect(gainDb).toBeCloseTo(-6, 1);
    expect(await page.getByTestId("monitoring-reminder").isVisible()).toBe(true);
  });

  it("plays a 64-bit float source (which the browser's decoder refuses) and level-matches it", async () => {
    const f64 = await browser!.newPage();
    try {
      // First, the browser on its own: decodeAudioData refuses the file, so the player must convert it.
      await f64.goto(`${server!.resolvedUrls!.local[0]}?f64`);
      const raw = await f64.evaluate(async () => {
        const bytes = await (await fetch("/f64.wav")).arrayBuffer();
        return new OfflineAudioContext(2, 48000, 48000).decodeAudioData(bytes).then(() => "decoded", () => "refused");
      });
      expect(raw).toBe("refused");
      await f64.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-state") === "ready", null, { timeout: 60_000 });
      await f64.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-match-gain-db") !== "0.00");
      const gainDb = Number(await f64.getByTestId("ab-player").getAttribute("data-match-gain-db"));
      expect(gainDb).toBeCloseTo(-6, 1);
    } finally {
      await f64.close();
    }
  });

  it("asks for a safe monitoring level before the first playback, then plays", async () => {
    await page.getByRole("button", { name: "Play" }).click();
    await expect.poll(() => page.getByTestId("monitoring-notice").count()).toBe(1);
    expect((await attrs()).playing).toBe("false");
    await page.getByRole("button", { name: /level is safe/ }).click();
    await expect.poll(async () => Number((await attrs()).positionS), { timeout: 10_000 }).toBeGreaterThan(0.3);
    expect((await attrs()).playing).toBe("true");
  });

  it("switches by key at the same position, with B's own gain", async () => {
    const before = Number((await attrs()).positionS);
    await page.keyboard.press("b");
    const after = await attrs();
    expect(after.activeSource).toBe("B");
    expect(after.matchGainDb).toBe("0.00");
    // The clock kept running through the switch (no restart from 0).
    expect(Number(after.positionS)).toBeGreaterThanOrEqual(before);
    await page.keyboard.press("s");
    expect((await attrs()).activeSource).toBe("A");
    await page.getByLabel("Level matching").uncheck();
    expect(await attrs()).toMatchObject({ matching: "off", matchGainDb: "0.00" });
    await page.getByLabel("Level matching").check();
  });

  it("draws one chart per stage trace and one for loudness, both renders in each", async () => {
    const panels = page.locator("[data-testid=trace-charts] figure");
    expect(await panels.evaluateAll((els) => els.map((e) => e.getAttribute("data-panel")))).toEqual(["s2:gr", "loudness"]);
    await expect.poll(() => page.locator("[data-panel='s2:gr'] .recharts-area-area").count()).toBe(2);
    expect(await page.locator("[data-panel=loudness] .recharts-line-curve").count()).toBe(1);
  });

  it("loops over a region dragged on the waveform, and seeks from a comment marker", async () => {
    const box = (await page.locator("canvas").boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.25, box.y + box.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.5, box.y + box.height / 2, { steps: 4 });
    await page.mouse.up();
    expect(await page.getByTestId("loop-region").textContent()).toBe("Loop 0:01.5 – 0:03.0");
    // Longer than the loop: the position must have wrapped back into it.
    await page.waitForTimeout(1800);
    const inLoop = Number((await attrs()).positionS);
    expect(inLoop).toBeGreaterThanOrEqual(1.5);
    expect(inLoop).toBeLessThan(3.01);
    await page.getByRole("button", { name: "Pause" }).click();
    await page.getByRole("button", { name: "Stop looping" }).click();
    await page.locator("[data-comment-marker=c1]").click();
    expect((await attrs()).positionS).toBe("2.50");
    // The notice is not shown again in the same session.
    await page.getByRole("button", { name: "Play" }).click();
    expect(await page.getByTestId("monitoring-notice").count()).toBe(0);
    await page.getByRole("button", { name: "Pause" }).click();
  });

  it("starts a long pair from its first seconds, then swaps in the whole files while playing, on one clock", async () => {
    const long = await browser!.newPage();
    try {
      // The rest of the files is held back until playback has begun, so the swap happens while playing.
      let release: () => void = () => {};
      const held = new Promise<void>((r) => (release = r));
      await long.route(/long-[ab]\.wav$/, async (route) => {
        const start = Number(/^bytes=(\d+)-/.exec(route.request().headers()["range"] ?? "")?.[1] ?? 0);
        if (start > 12 * SR * 4) await held;
        await route.continue();
      });
      // The safety notice was confirmed on the first page; this is a new page of the same test run.
      await long.addInitScript(() => sessionStorage.setItem("tidemark:monitoring-level-set", "1"));
      await long.goto(`${server!.resolvedUrls!.local[0]}?long`);
      await long.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-state") === "ready", null, { timeout: 60_000 });
      const longAttrs = () => long.getByTestId("ab-player").evaluate((el) => ({ ...(el as HTMLElement).dataset }));
      // The position bar spans the whole 90 s from the first moment, before the rest has arrived.
      expect(await long.getByLabel("Position").getAttribute("max")).toBe("90");
      await long.getByRole("button", { name: "Play" }).click();
      await expect.poll(async () => Number((await longAttrs()).positionS), { timeout: 10_000 }).toBeGreaterThan(0.3);
      expect((await longAttrs()).loaded).toBe("partial");
      release();
      await long.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-loaded") === "full", null, { timeout: 60_000 });
      const states = await long.evaluate(() => (window as unknown as { loadedStates: string[] }).loadedStates);
      expect(states).toEqual(["none", "partial", "full"]);
      // Stored loudness of the whole sources, 6 LU apart, is the match throughout.
      expect(Number((await longAttrs()).matchGainDb)).toBeCloseTo(-6, 6);
      // Still playing after the swap, the clock moving on.
      const p1 = Number((await longAttrs()).positionS);
      await long.waitForTimeout(600);
      const after = await longAttrs();
      expect(after.playing).toBe("true");
      expect(Number(after.positionS)).toBeGreaterThan(p1 + 0.3);
      // Past the first 12 s now: seekable anywhere once whole.
      await long.getByLabel("Position").fill("70");
      expect(Number((await longAttrs()).positionS)).toBeGreaterThanOrEqual(70);
    } finally {
      await long.close();
    }
  });

  it("waits at the end of what has loaded, and plays on from there when the rest arrives", async () => {
    const long = await browser!.newPage();
    try {
      // Hold back every request for the rest of the files (ranges past the first 12 s) until released.
      let release: () => void = () => {};
      const held = new Promise<void>((r) => (release = r));
      await long.route(/long-[ab]\.wav$/, async (route) => {
        const start = Number(/^bytes=(\d+)-/.exec(route.request().headers()["range"] ?? "")?.[1] ?? 0);
        if (start > 12 * SR * 4) await held;
        await route.continue();
      });
      await long.addInitScript(() => sessionStorage.setItem("tidemark:monitoring-level-set", "1"));
      await long.goto(`${server!.resolvedUrls!.local[0]}?long`);
      const player = long.getByTestId("ab-player");
      await long.waitForFunction(() => document.querySelector("[data-testid=ab-player]")?.getAttribute("data-state") === "ready", null, { timeout: 60_000 });
      const attrs = () => player.evaluate((el) => ({ ...(el as HTMLElement).dataset }));
      expect((await attrs()).loaded).toBe("partial");
      await long.getByLabel("Position").fill("11.4");
      await long.getByRole("button", { name: "Play" }).click();
      await expect.poll(async () => (await attrs()).playing, { timeout: 10_000 }).toBe("false");
      expect(await long.getByTestId("loading-rest").textContent()).toContain("Waiting for the rest");
      const waitedAt = Number((await attrs()).positionS);
      expect(waitedAt).toBeGreaterThan(11.8);
      expect(waitedAt).toBeLessThanOrEqual(12);
      release();
      await expect.poll(async () => (await attrs()).loaded, { timeout: 30_000 }).toBe("full");
      await expect.poll(async () => (await attrs()).playing, { timeout: 10_000 }).toBe("true");
      await expect.poll(async () => Number((await attrs()).positionS), { timeout: 10_000 }).toBeGreaterThan(12.3);
    } finally {
      await long.close();
    }
  });
});
