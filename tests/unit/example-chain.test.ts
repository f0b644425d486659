// The command line's example chain and the studio template of the same
// settings are one chain written twice (the app reads nothing from examples/).
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { CHAIN_TEMPLATES } from "../../app/lib/chain-templates.ts";

describe("examples/gentle-master.json", () => {
  it("equals the Gentle master template", () => {
    const example = JSON.parse(readFileSync(new URL("../../examples/gentle-master.json", import.meta.url), "utf8"));
    expect(CHAIN_TEMPLATES.find((t) => t.name === "Gentle master")?.params).toEqual(example);
  });
});
