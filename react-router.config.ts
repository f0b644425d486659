import type { Config } from "@react-router/dev/config";

// Framework mode with server rendering: every page is rendered on the server
// first, so loaders (and their permission checks) run before any HTML is sent.
export default {
  appDirectory: "app",
  ssr: true,
} satisfies Config;
