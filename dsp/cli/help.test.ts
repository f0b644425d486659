// The compiled `tidemark` command (bin/tidemark.js → dist/cli, built by
// scripts/build-dsp.mjs, which npm test runs first): usage on --help for the
// command and each subcommand, exit 0.
import { spawnSync } from "node:child_process";
import { join } from "node:path";
import { describe, expect, it } from "vitest";

const bin = join(import.meta.dirname, "..", "..", "bin", "tidemark.js");

describe("tidemark --help", () => {
  for (const args of [["--help"], ["render", "--help"], ["analyze", "--help"]]) {
    it(`tidemark ${args.join(" ")} prints its usage and exits 0`, () => {
      const r = spawnSync(process.execPath, [bin, ...args], { encoding: "utf8", env: { ...process.env, NODE_OPTIONS: "" } });
      expect(r.stderr).toBe("");
      expect(r.status).toBe(0);
      expect(r.stdout).toMatch(/^usage: tidemark/);
    });
  }

});
