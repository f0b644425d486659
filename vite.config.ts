import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  // Only loopback unless HOST says otherwise; the start script sets it.
  server: { host: "127.0.0.1" },
  // The desk's worklet reaches fft.js (CommonJS, resonance stage) only at run time: pre-bundle it up front.
  optimizeDeps: { include: ["fft.js"] },
});
