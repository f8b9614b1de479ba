/**
 * The roof drawn from the site's outline and the anchors' positions (metres), with one
 * 48 px button per anchor, named by its label. The list beside the plan does the same for
 * keyboard users; the plan only adds where each anchor is.
 */
import type { Anchor } from "../types";

export type AnchorSlot = "anchor" | "safety_anchor";

export const SLOT_WORDS: Record<AnchorSlot, string> = { anchor: "Main", safety_anchor: "Safety" };

interface Props {
  outline: number[][];
  anchors: Anchor[];
  chosen: Record<AnchorSlot, number | null>;
  onPick: (anchor: number) => void;
}

const MARGIN_M = 2;

export function RoofPlan({ outline, anchors, chosen, onPick }: Props) {
  const placed = anchors.filter((a) => typeof a.x_m === "number" && typeof a.y_m === "number");
  const corners = outline.filter((p) => p.length === 2);
  const xs = [...corners.map((p) => p[0]!), ...placed.map((a) => a.x_m!)];
  const ys = [...corners.map((p) => p[1]!), ...placed.map((a) => a.y_m!)];
  if (!xs.length) {
    return <p class="note" data-testid="roof-plan-none">No roof plan is on record for this site: choose the anchors from the lists.</p>;
  }
  const minX = Math.min(...xs) - MARGIN_M;
  const minY = Math.min(...ys) - MARGIN_M;
  const w = Math.max(...xs) + MARGIN_M - minX;
  const h = Math.max(...ys) + MARGIN_M - minY;
  return (
    <div class="roof" role="group" aria-label="Roof plan: each button is an anchor" data-testid="roof-plan">
      <div class="roof-plan" style={{ aspectRatio: `${w} / ${h}` }}>
        <svg viewBox={`${minX} ${minY} ${w} ${h}`} preserveAspectRatio="none" aria-hidden="true">
          {corners.length >= 3 && (
            <polygon points={corners.map((p) => `${p[0]},${p[1]}`).join(" ")} class="roof-outline" vector-effect="non-scaling-stroke" />
          )}
        </svg>
        {placed.map((a) => {
          const slot = (Object.keys(chosen) as AnchorSlot[]).find((s) => chosen[s] === a.id);
          return (
            <button
              key={a.id}
              type="button"
              class={`roof-anchor${slot ? ` roof-anchor-${slot}` : ""}`}
              style={{ left: `${((a.x_m! - minX) / w) * 100}%`, top: `${((a.y_m! - minY) / h) * 100}%` }}
              onClick={() => onPick(a.id)}
              data-testid={`plan-anchor-${a.label}`}
              data-slot={slot ?? ""}
            >
              <span>{a.label}</span>
              {slot && <span class="roof-slot">{SLOT_WORDS[slot]}</span>}
            </button>
          );
        })}
      </div>
      <p class="muted small">Plan from the site's roof outline, in metres, {Math.round(w - 2 * MARGIN_M)} m by {Math.round(h - 2 * MARGIN_M)} m.</p>
    </div>
  );
}
