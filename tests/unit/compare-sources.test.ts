// Source keys of the compare page and the pair it opens with.
import { describe, expect, it } from "vitest";
import { choosePair, formatSourceKey, parseSourceKey, type PairCandidate } from "../../app/lib/compare/sources.ts";

const id = (n: number) => `00000000-0000-4000-8000-${String(n).padStart(12, "0")}`;
const render = (n: number, mix: number): PairCandidate => ({ key: `render:${id(n)}`, type: "render", id: id(n), mixId: id(mix) });
const mix = (n: number): PairCandidate => ({ key: `mix:${id(n)}`, type: "mix", id: id(n), mixId: id(n) });

describe("source keys", () => {
  it("reads render and mix keys and a bare id as a render; refuses anything else", () => {
    expect(parseSourceKey(`mix:${id(1)}`)).toEqual({ type: "mix", id: id(1) });
    expect(parseSourceKey(`render:${id(2).toUpperCase()}`)).toEqual({ type: "render", id: id(2) });
    expect(parseSourceKey(id(3))).toEqual({ type: "render", id: id(3) });
    for (const bad of ["", "mix:", `chain:${id(1)}`, `mix:${id(1)}x`, "render:1", null, undefined]) expect(parseSourceKey(bad)).toBeNull();
    expect(formatSourceKey({ type: "mix", id: id(4) })).toBe(`mix:${id(4)}`);
  });
});

describe("the default pair", () => {
  // Renders newest first (r12 of mix v2, r11 of mix v1), then mixes newest first.
  const sources = [render(12, 2), render(11, 1), mix(2), mix(1)];

  it("is the newest render against the mix it was made from", () => {
    const { a, b } = choosePair(sources, {});
    expect([a?.key, b?.key]).toEqual([`render:${id(12)}`, `mix:${id(2)}`]);
    expect(choosePair(sources, { a: id(11) }).b?.key).toBe(`mix:${id(1)}`);
  });

  it("is the two newest renders when the mixes are not offered (a client)", () => {
    const { a, b } = choosePair([render(12, 2), render(11, 1)], {});
    expect([a?.key, b?.key]).toEqual([`render:${id(12)}`, `render:${id(11)}`]);
  });

  it("pairs a chosen mix with what was rendered from it, else the version before", () => {
    expect(choosePair(sources, { a: `mix:${id(1)}` }).b?.key).toBe(`render:${id(11)}`);
    expect(choosePair([mix(3), ...sources], { a: `mix:${id(3)}` }).b?.key).toBe(`mix:${id(2)}`);
    const onlyMixes = choosePair([mix(2), mix(1)], {});
    expect([onlyMixes.a?.key, onlyMixes.b?.key]).toEqual([`mix:${id(2)}`, `mix:${id(1)}`]);
  });

  it("takes a wanted pair, ignoring unknown keys and B equal to A", () => {
    expect(choosePair(sources, { a: `mix:${id(1)}`, b: `mix:${id(2)}` }).b?.key).toBe(`mix:${id(2)}`);
    expect(choosePair(sources, { a: `render:${id(99)}` }).a?.key).toBe(`render:${id(12)}`);
    expect(choosePair(sources, { a: `render:${id(11)}`, b: `render:${id(11)}` }).b?.key).toBe(`mix:${id(1)}`);
    expect(choosePair([render(12, 2)], {})).toEqual({ a: render(12, 2), b: null });
    expect(choosePair([], { a: id(1) })).toEqual({ a: null, b: null });
  });
});
