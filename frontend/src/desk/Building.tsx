/**
 * The owner's building: each anchor on the roof plan and in a table, its state in words and
 * shape (ISO 3864-1 signs): in service, certificate or inspection due within 30 days, lapsed
 * or overdue, out of service with the reason. The table is the same information for keyboard
 * and screen-reader users; the plan only adds where each anchor is.
 */
import { href } from "../ui/hooks";
import { Badge } from "../ui/signs";
import { dayFrom } from "./api";
import { anchorState, DUE_SOON_DAYS } from "./anchorState";
import { DeskCaution } from "./parts";
import { RoofDrawing } from "./roof";
import { SiteTitle, SiteWaiting, useSite } from "./site";

export function DeskBuilding({ siteId }: { siteId?: number }) {
  const { data, empty, error } = useSite(siteId);
  if (!data) return <SiteWaiting title="Building" empty={empty} error={error} />;
  const today = dayFrom(0);
  const rows = data.anchors
    .map((a) => ({ anchor: a, state: anchorState(a, data.log, data.intervalDays, today) }))
    .sort((a, b) => a.anchor.label.localeCompare(b.anchor.label, undefined, { numeric: true }));
  const stateOf = new Map(rows.map((r) => [r.anchor.id, r.state]));
  const outline = Array.isArray(data.site.roof_outline) ? data.site.roof_outline : [];
  const count = (key: string) => rows.filter((r) => r.state.key === key).length;

  return (
    <>
      <SiteTitle title="Building" page="building" data={data} />
      <p data-testid="building-summary">
        {rows.length} anchors: {count("in_service")} in service, {count("due_soon")} due within {DUE_SOON_DAYS} days,{" "}
        {count("lapsed")} lapsed or overdue, {count("out_of_service")} out of service.{" "}
        <a class="inline-link" href={href({ name: "desk", page: "log", id: data.site.id })}>Open the log book</a>
      </p>
      <div class="desk-building">
        <section aria-labelledby="plan-head">
          <h2 id="plan-head">Roof plan</h2>
          <RoofDrawing outline={outline} anchors={data.anchors} label="Roof plan: each anchor with its state" testid="building-plan"
            noneTestid="building-plan-none" none="No roof plan is on record for this site; the table lists every anchor.">
            {(a, style) => {
              const s = stateOf.get(a.id)!;
              return (
                <span key={a.id} class={`roof-mark roof-mark-${s.sign}`} style={style} data-testid={`mark-${a.label}`} data-state={s.key}>
                  <span class="roof-mark-label">{a.label}</span>
                  <Badge kind={s.sign} word={s.word} />
                </span>
              );
            }}
          </RoofDrawing>
        </section>
        <section aria-labelledby="anchors-head">
          <h2 id="anchors-head">Anchors</h2>
          <table class="desk-table" data-testid="building-anchors">
            <thead>
              <tr><th scope="col">Anchor</th><th scope="col">State</th><th scope="col">Why</th></tr>
            </thead>
            <tbody>
              {rows.map(({ anchor, state }) => (
                <tr key={anchor.id} data-testid={`anchor-${anchor.label}`} data-state={state.key}>
                  <th scope="row">{anchor.label}</th>
                  <td><Badge kind={state.sign} word={state.word} testid="anchor-state" /></td>
                  <td>{state.why}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p class="muted small">
            The inspection interval is the site's profile's ({data.intervalDays ?? "none given"}{data.intervalDays ? " days" : ""}); the server
            reads the same log book when it holds or clears a job.
          </p>
        </section>
      </div>
      <DeskCaution />
    </>
  );
}
