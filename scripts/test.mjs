#!/usr/bin/env node
// `npm test`: the same preparation as `npm start` against a separate test
// database, then vitest (unit and server tests on the real PostgreSQL), then
// Playwright against a production build in Debian's chromium.
//   --services   prepare, print the environment, and keep the services up (for working on tests)
//   --no-e2e     skip the browser tests
//   --unit=A,B   vitest on these paths only (--unit= skips vitest)
//   --e2e=A,B    Playwright on these specs only (--e2e= skips the browser tests)
import { rmSync } from "node:fs";
import { spawnSync } from "node:child_process";
import { root, portOffset, log, run, which, aptInstall, ensureNodeModules, spawnService, waitForPort, portFree, fail } from "./lib.mjs";
import { ensurePostgres, ensureDatabase, databaseUrl } from "./postgres.mjs";
import { startFakes } from "./fakes.mjs";

const servicesOnly = process.argv.includes("--services");
const e2e = !process.argv.includes("--no-e2e") && !servicesOnly && process.argv.find((a) => a === "--e2e=") === undefined;
const listArg = (name) => {
  const arg = process.argv.find((a) => a.startsWith(`--${name}=`));
  return arg === undefined ? null : arg.slice(name.length + 3).split(",").filter(Boolean);
};
const unitOnly = listArg("unit");
const e2eOnly = listArg("e2e");
const webPort = Number(process.env.TEST_PORT ?? 3100 + portOffset);

ensureNodeModules();
const missing = [];
if (!which("sox")) missing.push("sox");
if (e2e && !which("chromium")) missing.push("chromium");
aptInstall(missing);

const children = [];
let pg = null;
function cleanup() {
  for (const child of children) child.stopGroup();
  pg?.stop();
}
process.on("SIGINT", () => { cleanup(); process.exit(130); });
process.on("SIGTERM", () => { cleanup(); process.exit(143); });

const env = { ...process.env, NODE_ENV: "test", SESSION_SECRET: "test-session-secret-not-for-production", STORAGE_DIR: `${root}/.data/test-storage` };
if (!process.env.DATABASE_URL) {
  pg = await ensurePostgres();
  ensureDatabase(pg, "tidemark_test", { fresh: !servicesOnly });
  env.DATABASE_URL = databaseUrl("tidemark_test");
}
if (!servicesOnly) rmSync(env.STORAGE_DIR, { recursive: true, force: true });
env.TIDEMARK_PUBLIC_URL ??= `http://127.0.0.1:${webPort}`;
env.MAIL_FROM ??= "Tidemark <studio@tidemark.test>";
Object.assign(env, await startFakes(children, "test", { publicUrl: env.TIDEMARK_PUBLIC_URL }));
run("npx", ["tsx", "scripts/migrate.ts", "--seed"], { env });

if (servicesOnly) {
  for (const key of ["TIDEMARK_PUBLIC_URL", "DATABASE_URL", "SESSION_SECRET", "STORAGE_DIR", "S3_ENDPOINT", "S3_BUCKET", "S3_ACCESS_KEY_ID", "S3_SECRET_ACCESS_KEY", "S3_REGION", "SMTP_URL", "FAKE_SMTP_API", "STRIPE_API_HOST", "STRIPE_API_PORT", "STRIPE_API_PROTOCOL"]) {
    if (env[key]) console.log(`export ${key}=${JSON.stringify(env[key])}`);
  }
  log("services are up; Ctrl-C stops them");
  await new Promise(() => {});
}

let status = 0;
const step = (name, cmd, args, extraEnv = {}) => {
  if (status !== 0) return;
  log(`— ${name}`);
  const r = spawnSync(cmd, args, { cwd: root, stdio: "inherit", env: { ...env, ...extraEnv } });
  if (r.status !== 0) {
    log(`${name} failed (${r.status ?? r.signal})`);
    status = r.status || 1;
  }
};

// The compiled command and render task (dist/): the CLI tests run the command, the worker loads the task.
step("compile", "node", ["scripts/build-dsp.mjs"]);
if (unitOnly === null || unitOnly.length > 0) step("vitest", "npx", ["vitest", "run", ...(unitOnly ?? [])]);

if (e2e && status === 0) {
  step("build", "npx", ["react-router", "build"]);
  if (status === 0) {
    if (!(await portFree(webPort))) fail(`port ${webPort} is in use; set TEST_PORT`);
    const webEnv = { ...env, NODE_ENV: "production", PORT: String(webPort), HOST: "127.0.0.1", TIDEMARK_INSECURE_COOKIES: "1" };
    const buildDir = process.env.TIDEMARK_BUILD_DIR ?? "build";
    const web = spawnService(process.execPath, ["server/main.mjs", `./${buildDir}/server/index.js`], { env: webEnv, stdio: "inherit" });
    children.push(web);
    if (await import("node:fs").then((fs) => fs.existsSync(`${root}/app/jobs/worker.server.ts`))) {
      children.push(spawnService("npx", ["tsx", "app/jobs/worker.server.ts"], { env: webEnv, stdio: "inherit" }));
    }
    await waitForPort(webPort, 60_000);
    step("playwright", "npx", ["playwright", "test", ...(e2eOnly ?? [])], { BASE_URL: `http://127.0.0.1:${webPort}` });
  }
}

cleanup();
log(status === 0 ? "all tests passed" : "tests failed");
process.exit(status);
