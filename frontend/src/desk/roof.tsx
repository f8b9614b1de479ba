/**
 * Drawing a roof: the site's outline (metres) as an SVG polygon, with each placed anchor laid
 * over it at its position as an element of the caller's choosing (a 48 px button or a marker
 * with its state). The planning screen and the building screen both draw through here.
 */
import type { ComponentChildren } from "preact";

interface Placed {
  id: number;
  x_m?: number | null;
  y_m?: number | null;
}

interface Props<A extends Placed> {
  outline: number[][];
  anchors: A[];
  /** What the whole drawing is, for a screen reader (the group's name). */
  label: string;
  /** Shown when there is nothing to draw. */
  none: ComponentChildren;
  noneTestid: string;
  testid: string;
  /** One anchor's element; `style` places it on the plan. */
  children: (anchor: A, style: { left: string; top: string }) => ComponentChildren;
}

const MARGIN_M = 2;

export function RoofDrawing<A extends Placed>({ outline, anchors, label, none, noneTestid, testid, children }: Props<A>) {
  const placed = anchors.filter((a) => typeof a.x_m === "number" && typeof a.y_m === "number");
  const corners = outline.filter((p) => p.length === 2);
  const xs = [...corners.map((p) => p[0]!), ...placed.map((a) => a.x_m!)];
  const ys = [...corners.map((p) => p[1]!), ...placed.map((a) => a.y_m!)];
  if (!xs.length) {
    return <p class="note" data-testid={noneTestid}>{none}</p>;
  }
  const minX = Math.min(...xs) - MARGIN_M;
  const minY = Math.min(...ys) - MARGIN_M;
  const w = Math.max(...xs) + MARGIN_M - minX;
  const h = Math.max(...ys) + MARGIN_M - minY;
  return (
    <div class="roof" role="group" aria-label={label} data-testid={testid}>
      <div class="roof-plan" style={{ aspectRatio: `${w} / ${h}` }}>
        <svg viewBox={`${minX} ${minY} ${w} ${h}`} preserveAspectRatio="none" aria-hidden="true">
          {corners.length >= 3 && (
            <polygon points={corners.map((p) => `${p[0]},${p[1]}`).join(" ")} class="roof-outline" vector-effect="non-scaling-stroke" />
          )}
        </svg>
        {placed.map((a) => children(a, { left: `${((a.x_m! - minX) / w) * 100}%`, top: `${((a.y_m! - minY) / h) * 100}%` }))}
      </div>
      <p class="muted small">Plan from the site's roof outline, in metres, {Math.round(w - 2 * MARGIN_M)} m by {Math.round(h - 2 * MARGIN_M)} m.</p>
    </div>
  );
}
