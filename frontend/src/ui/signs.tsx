/**
 * Safety-sign shapes after ISO 3864-1 geometry: the word is always printed beside the shape,
 * so nothing depends on colour alone.
 */
import type { JobState } from "../types";
import { num } from "../calc/working";
import { nearLimit, type LocalVerdict } from "../sheet";

export type SignKind = "held" | "caution" | "mustdo" | "safe" | "closed";

export function Sign({ kind, size = 28 }: { kind: SignKind; size?: number }) {
  const common = { width: size, height: size, viewBox: "0 0 32 32", "aria-hidden": "true" as const };
  switch (kind) {
    case "held":
      // Prohibition: red ring with a diagonal bar, white inside.
      return (
        <svg {...common} class="sign sign-held">
          <circle cx="16" cy="16" r="13" fill="#fff" stroke="var(--sign-red)" stroke-width="4" />
          <line x1="6.8" y1="6.8" x2="25.2" y2="25.2" stroke="var(--sign-red)" stroke-width="4" />
        </svg>
      );
    case "caution":
      // Warning: yellow triangle with a black border and mark.
      return (
        <svg {...common} class="sign sign-caution">
          <path d="M16 2.5 30.5 28.5H1.5Z" fill="var(--sign-yellow)" stroke="#000" stroke-width="2.2" stroke-linejoin="round" />
          <rect x="14.6" y="11" width="2.8" height="9.5" fill="#000" />
          <rect x="14.6" y="22.6" width="2.8" height="2.8" fill="#000" />
        </svg>
      );
    case "mustdo":
      // Mandatory action: blue disc with a white mark.
      return (
        <svg {...common} class="sign sign-mustdo">
          <circle cx="16" cy="16" r="14.5" fill="var(--sign-blue)" />
          <rect x="14.4" y="7" width="3.2" height="12" fill="#fff" />
          <rect x="14.4" y="21.5" width="3.2" height="3.2" fill="#fff" />
        </svg>
      );
    case "safe":
      // Safe condition: green square with a white tick.
      return (
        <svg {...common} class="sign sign-safe">
          <rect x="1.5" y="1.5" width="29" height="29" fill="var(--sign-green)" />
          <path d="M8 16.5l5.2 5.2L24.5 10" fill="none" stroke="#fff" stroke-width="3.6" />
        </svg>
      );
    case "closed":
      return (
        <svg {...common} class="sign sign-closed">
          <rect x="1.5" y="1.5" width="29" height="29" fill="var(--sign-grey)" />
        </svg>
      );
  }
}

export function Badge({ kind, word, testid }: { kind: SignKind; word: string; testid?: string }) {
  return (
    <span class={`badge badge-${kind}`} data-testid={testid} data-sign={kind}>
      <Sign kind={kind} />
      <span class="badge-word">{word}</span>
    </span>
  );
}

const STATE_SIGN: Record<JobState, { kind: SignKind; word: string }> = {
  planned: { kind: "mustdo", word: "Planned: checks due" },
  cleared: { kind: "safe", word: "Cleared to start" },
  working: { kind: "safe", word: "Working" },
  held: { kind: "held", word: "Held: stop work" },
  closed: { kind: "closed", word: "Closed" },
};

export function StateBadge({ state, testid }: { state: JobState; testid?: string }) {
  const sign = STATE_SIGN[state] ?? { kind: "mustdo", word: state };
  return (
    <span data-state={state}>
      <Badge kind={sign.kind} word={sign.word} testid={testid} />
    </span>
  );
}

/**
 * The sign and word of an item's verdict. A pass shows the caution triangle only when the item
 * names a caution band and its margin is under it: most limits already hold a standard's
 * factor, and a warning on every one of them would teach the crew to ignore the sign.
 */
export function verdictSign(
  verdict: LocalVerdict,
  margin: number | null,
  band: number | null,
): { kind: SignKind; word: string } {
  switch (verdict) {
    case "pass":
      return nearLimit(verdict, margin, band)
        ? { kind: "caution", word: `Pass, within ${num(band! * 100, 3)} % of the limit` }
        : { kind: "safe", word: "Pass" };
    case "fail":
      return { kind: "held", word: "Fail" };
    case "na":
      return { kind: "closed", word: "Not applicable" };
    case "recorded":
      return { kind: "closed", word: "Recorded" };
    case "unknown":
      return { kind: "mustdo", word: "Server decides" };
    case "missing":
      return { kind: "mustdo", word: "Needs an answer" };
  }
}

export function VerdictBadge({ verdict, margin, band }: { verdict: LocalVerdict; margin: number | null; band: number | null }) {
  const { kind, word } = verdictSign(verdict, margin, band);
  return <Badge kind={kind} word={word} />;
}
