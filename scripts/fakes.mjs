// The local fakes of hosted services (storage, mail, payments), started on
// loopback by `npm start` and `npm test`. Each fake is a script under
// scripts/fakes/ that listens on the port in its environment and prints a
// line with "ready" once it does.
import { existsSync } from "node:fs";
import path from "node:path";
import { root, portOffset, log, supervise, waitForPort, portFree } from "./lib.mjs";

// name → script, port variable, ports for dev and test, environment given to the app
const FAKES = [
  { name: "s3", script: "scripts/fakes/s3.ts", ports: { dev: 4569, test: 4579 },
    env: (port, mode) => ({ S3_ENDPOINT: `http://127.0.0.1:${port}`, S3_BUCKET: `tidemark-${mode}`, S3_ACCESS_KEY_ID: "S3RVER", S3_SECRET_ACCESS_KEY: "S3RVER", S3_REGION: "us-east-1" }) },
  { name: "smtp", script: "scripts/fakes/smtp.ts", ports: { dev: 2525, test: 2535 },
    env: (port) => ({ SMTP_URL: `smtp://127.0.0.1:${port}`, FAKE_SMTP_API: `http://127.0.0.1:${port + 1}` }) },
  { name: "payments", script: "scripts/fakes/payments.ts", ports: { dev: 12111, test: 12121 },
    env: (port) => ({ STRIPE_API_HOST: "127.0.0.1", STRIPE_API_PORT: String(port), STRIPE_API_PROTOCOL: "http", STRIPE_SECRET_KEY: "sk_test_tidemark_local", STRIPE_WEBHOOK_SECRET: "whsec_tidemark_local_fake" }) },
];

export async function startFakes(children, mode, { publicUrl } = {}) {
  const env = {};
  for (const fake of FAKES) {
    if (!existsSync(path.join(root, fake.script))) continue;
    const port = fake.ports[mode] + portOffset;
    const fakeEnv = fake.env(port, mode);
    if (await portFree(port)) {
      const child = supervise(`fake ${fake.name}`, "npx", ["tsx", fake.script], {
        env: { ...process.env, FAKE_PORT: String(port), FAKE_MODE: mode, ...(publicUrl ? { FAKE_PAYMENTS_WEBHOOK_URL: `${publicUrl}/api/payments/webhook` } : {}), ...fakeEnv },
        stdio: ["ignore", "inherit", "inherit"],
      });
      children.push(child);
      await waitForPort(port, 30_000);
      log(`fake ${fake.name} on 127.0.0.1:${port}`);
    } else {
      log(`fake ${fake.name}: port ${port} already answers; reusing it`);
    }
    Object.assign(env, fakeEnv);
  }
  return env;
}
