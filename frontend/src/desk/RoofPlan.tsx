/**
 * The roof for choosing a drop's anchors: one 48 px button per anchor, named by its label.
 * The list beside the plan does the same for keyboard users; the plan only adds where each
 * anchor is.
 */
import type { Anchor } from "../types";
import { RoofDrawing } from "./roof";

export type AnchorSlot = "anchor" | "safety_anchor";

export const SLOT_WORDS: Record<AnchorSlot, string> = { anchor: "Main", safety_anchor: "Safety" };

interface Props {
  outline: number[][];
  anchors: Anchor[];
  chosen: Record<AnchorSlot, number | null>;
  onPick: (anchor: number) => void;
}

export function RoofPlan({ outline, anchors, chosen, onPick }: Props) {
  return (
    <RoofDrawing outline={outline} anchors={anchors} label="Roof plan: each button is an anchor" testid="roof-plan"
      noneTestid="roof-plan-none" none="No roof plan is on record for this site: choose the anchors from the lists.">
      {(a, style) => {
        const slot = (Object.keys(chosen) as AnchorSlot[]).find((s) => chosen[s] === a.id);
        return (
          <button
            key={a.id}
            type="button"
            class={`roof-anchor${slot ? ` roof-anchor-${slot}` : ""}`}
            style={style}
            onClick={() => onPick(a.id)}
            data-testid={`plan-anchor-${a.label}`}
            data-slot={slot ?? ""}
          >
            <span>{a.label}</span>
            {slot && <span class="roof-slot">{SLOT_WORDS[slot]}</span>}
          </button>
        );
      }}
    </RoofDrawing>
  );
}
