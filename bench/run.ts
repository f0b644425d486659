// `npm run bench`: runs each benchmark module that exists, in order. Each
// module exports `async function run(): Promise<void>` that prints its figures.
// Pass names to run only some: `npm run bench -- analysis chain`.

import { existsSync } from "node:fs";
import { join } from "node:path";

const MODULES = ["analysis", "chain", "pipeline", "delivery", "desk", "load"];

const wanted = process.argv.slice(2);
for (const name of MODULES) {
  if (wanted.length > 0 && !wanted.includes(name)) continue;
  // The load run needs a build and a database: only when asked for by name.
  if (name === "load" && !wanted.includes("load")) continue;
  const file = join(import.meta.dirname, `${name}.ts`);
  if (!existsSync(file)) continue;
  const mod = (await import(file)) as { run?: () => Promise<void> };
  if (typeof mod.run !== "function") {
    console.log(`bench/${name}.ts exports no run(); skipped`);
    continue;
  }
  console.log(`\n== bench/${name}.ts ==`);
  const t0 = performance.now();
  await mod.run();
  console.log(`(${((performance.now() - t0) / 1000).toFixed(1)} s)`);
}
