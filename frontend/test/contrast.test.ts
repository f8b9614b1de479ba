/** Text contrast of the theme colours in styles.css: at least 7:1 (WCAG 2.2, 1.4.6 AAA). */
import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";

const css = readFileSync(new URL("../src/styles.css", import.meta.url), "utf8");

function variables(block: string): Record<string, string> {
  return Object.fromEntries([...block.matchAll(/--([a-z-]+):\s*(#[0-9a-fA-F]{6})/g)].map((m) => [m[1]!, m[2]!]));
}

const light = variables(css.slice(css.indexOf(":root"), css.indexOf("@media (prefers-color-scheme: dark)")));
const dark = { ...light, ...variables(css.slice(css.indexOf("@media (prefers-color-scheme: dark)"))) };

function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => {
    const c = parseInt(hex.slice(i, i + 2), 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  });
  return 0.2126 * r! + 0.7152 * g! + 0.0722 * b!;
}

export function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
  return (hi! + 0.05) / (lo! + 0.05);
}

const PAIRS: [string, string][] = [
  ["fg", "bg"], ["muted", "bg"], ["fg", "card"], ["muted", "card"], ["on-accent", "accent"],
  ["error", "bg"], ["error", "card"], ["fg", "note-bg"], ["fg", "alert-bg"], ["muted", "alert-bg"],
  ["accent", "bg"], ["bg", "fg"], ["fg", "ok-bg"], ["muted", "ok-bg"], ["accent", "card"],
];

describe.each([["light", light], ["dark", dark]])("%s theme", (_, theme) => {
  it.each(PAIRS)("%s on %s is at least 7:1", (fg, bg) => {
    expect(contrast(theme[fg]!, theme[bg]!)).toBeGreaterThanOrEqual(7);
  });
  it.each(["pass-bg", "fail-bg", "na-bg"])("white on %s is at least 7:1", (bg) => {
    expect(contrast("#ffffff", theme[bg]!)).toBeGreaterThanOrEqual(7);
  });
});
