/** Where a drop stands on its facade, from the roof plan; a port of site_plan.py. */

export interface FacadePosition {
  corner_distance_m: number;
  facade_length_m: number;
  building_depth_m: number;
}

/** The drop's place on the outline's nearest edge; null without a usable outline. */
export function facadePosition(outline: number[][], point: [number, number]): FacadePosition | null {
  const corners = outline.map((p) => [Number(p[0]), Number(p[1])] as [number, number]);
  if (corners.length < 3) return null;
  const [px, py] = point;
  let best: [number, number, number, number] | null = null;
  for (let i = 0; i < corners.length; i++) {
    const [ax, ay] = corners[i]!;
    const [bx, by] = corners[(i + 1) % corners.length]!;
    const length = Math.hypot(bx - ax, by - ay);
    if (length === 0) return null;
    let t = ((px - ax) * (bx - ax) + (py - ay) * (by - ay)) / (length * length);
    t = Math.min(Math.max(t, 0), 1);
    const gap = Math.hypot(px - (ax + t * (bx - ax)), py - (ay + t * (by - ay)));
    if (best === null || gap < best[0]) best = [gap, t * length, length, i];
  }
  const [, along, length, i] = best!;
  const [ax, ay] = corners[i]!;
  const [bx, by] = corners[(i + 1) % corners.length]!;
  const nx = -(by - ay) / length;
  const ny = (bx - ax) / length;
  const depth = Math.max(...corners.map(([cx, cy]) => Math.abs((cx - ax) * nx + (cy - ay) * ny)));
  return { corner_distance_m: Math.min(along, length - along), facade_length_m: length, building_depth_m: depth };
}
