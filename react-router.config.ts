import type { Config } from "@react-router/dev/config";

// Framework mode with server rendering: every page is rendered on the server
// first, so loaders (and their permission checks) run before any HTML is sent.
export default {
  appDirectory: "app",
  ssr: true,
  // Lets two builds of one checkout live apart (e.g. a check beside a running server).
  buildDirectory: process.env.TIDEMARK_BUILD_DIR ?? "build",
} satisfies Config;
