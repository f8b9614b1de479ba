/**
 * Checklist versions: every checklist the organisation fills (its own and Parapet's defaults),
 * each version with its number, state and publication date; two versions of one checklist
 * compared in words (items added, removed, changed); a draft published after a confirmation
 * that says a published version never changes.
 */
import { useEffect, useState } from "preact/hooks";
import type { ChecklistItem, ChecklistVersion } from "../types";
import { dateTimeOf } from "../ui/hooks";
import { Badge } from "../ui/signs";
import { desk, fieldErrors, type Checklist, type VersionDiff } from "./api";
import { changeLines, itemLines, subjectWords, type LabelOf } from "./checklistWords";
import { DeskCaution } from "./parts";

interface Group {
  checklist: Checklist;
  /** Oldest first. */
  versions: ChecklistVersion[];
  /** A default checklist that one of the organisation's own, with a published version, replaces. */
  replaced: boolean;
}

function errorText(e: unknown): string {
  return Object.values(fieldErrors(e)).flat().join(" ");
}

function labels(...versions: (ChecklistVersion | undefined)[]): LabelOf {
  return (key) => {
    for (const v of versions) {
      const item = v?.items.find((i) => i.key === key);
      if (item) return item.label;
    }
    return undefined;
  };
}

function newestPublished(versions: ChecklistVersion[]): ChecklistVersion | undefined {
  return versions.filter((v) => v.status === "published").at(-1);
}

function inUseWords(group: Group, v: ChecklistVersion): string {
  if (v.status !== "published") return "Not in use until published";
  if (group.replaced) return "Replaced by your organisation's own checklist";
  return newestPublished(group.versions)?.id === v.id ? "In use for new pre-start checks" : "Earlier version: sheets filled against it keep it";
}

function ItemBlock({ item, labelOf, testid }: { item: ChecklistItem; labelOf: LabelOf; testid: string }) {
  return (
    <li class="card" data-testid={testid} data-key={item.key}>
      <strong class="card-title">{item.label}</strong>
      <ul class="desk-diff-lines">
        {itemLines(item, labelOf).map((line) => <li key={line}>{line}</li>)}
      </ul>
    </li>
  );
}

function DiffView({ diff, from, to, title }: { diff: VersionDiff; from: ChecklistVersion; to: ChecklistVersion; title: string }) {
  const headId = `diff-head-${from.id}-${to.id}`;
  useEffect(() => document.getElementById(headId)?.focus(), [headId]);
  const afterLabels = labels(to, from);
  const beforeLabels = labels(from, to);
  const unchanged = to.items.length - diff.added.length - diff.changed.length;
  const nothing = !diff.added.length && !diff.removed.length && !diff.changed.length;
  return (
    <section class="desk-diff" aria-labelledby={headId} data-testid="version-diff" data-from={diff.from.number} data-to={diff.to.number}>
      <h3 id={headId} tabIndex={-1}>
        {title}: changes from version {diff.from.number} to version {diff.to.number}
      </h3>
      <p data-testid="diff-summary">
        {nothing
          ? "The two versions ask the same items in the same words."
          : `${diff.added.length} added, ${diff.removed.length} removed, ${diff.changed.length} changed, ${unchanged} unchanged.`}
      </p>
      {diff.added.length > 0 && (
        <>
          <h4>Items added in version {diff.to.number}</h4>
          <ul class="list desk-diff-items" data-testid="diff-added">
            {diff.added.map((item) => <ItemBlock key={item.key} item={item} labelOf={afterLabels} testid={`added-${item.key}`} />)}
          </ul>
        </>
      )}
      {diff.removed.length > 0 && (
        <>
          <h4>Items removed since version {diff.from.number}</h4>
          <ul class="list desk-diff-items" data-testid="diff-removed">
            {diff.removed.map((item) => <ItemBlock key={item.key} item={item} labelOf={beforeLabels} testid={`removed-${item.key}`} />)}
          </ul>
        </>
      )}
      {diff.changed.length > 0 && (
        <>
          <h4>Items changed</h4>
          <ul class="list desk-diff-items" data-testid="diff-changed">
            {diff.changed.map((c) => {
              const item = to.items.find((i) => i.key === c.key);
              return (
                <li key={c.key} class="card" data-testid={`changed-${c.key}`} data-key={c.key}>
                  <strong class="card-title">{afterLabels(c.key) ?? c.key}</strong>
                  <ul class="desk-diff-lines">
                    {changeLines(c.fields, c.before, c.after, afterLabels, item?.unit).map((line) => <li key={line}>{line}</li>)}
                  </ul>
                </li>
              );
            })}
          </ul>
        </>
      )}
    </section>
  );
}

function Compare({ group }: { group: Group }) {
  const { versions, checklist } = group;
  const [from, setFrom] = useState(String(versions.at(-2)!.id));
  const [to, setTo] = useState(String(versions.at(-1)!.id));
  const [diff, setDiff] = useState<VersionDiff | null>(null);
  const [error, setError] = useState("");
  const [busy, setBusy] = useState(false);
  const slug = checklist.id;

  async function submit(event: Event) {
    event.preventDefault();
    setError("");
    setDiff(null);
    if (from === to) return setError("Choose two different versions to compare.");
    setBusy(true);
    try {
      setDiff(await desk.versionDiff(Number(to), Number(from)));
    } catch (e) {
      setError(errorText(e));
    } finally {
      setBusy(false);
    }
  }

  const choice = (id: string, label: string, value: string, set: (v: string) => void) => (
    <div class="field">
      <label for={id}>{label}</label>
      <select id={id} value={value} onChange={(e) => { set(e.currentTarget.value); setDiff(null); setError(""); }}>
        {versions.map((v) => (
          <option key={v.id} value={String(v.id)}>
            Version {v.number} ({v.status === "published" ? "published" : "draft"})
          </option>
        ))}
      </select>
    </div>
  );
  const fromVersion = versions.find((v) => String(v.id) === from);
  const toVersion = versions.find((v) => String(v.id) === to);

  return (
    <>
      <form class="desk-compare" onSubmit={submit} data-testid="compare" aria-label={`Compare two versions of ${checklist.title}`}>
        {choice(`from-${slug}`, "From version", from, setFrom)}
        {choice(`to-${slug}`, "To version", to, setTo)}
        <button class="btn" type="submit" disabled={busy} data-testid="compare-submit">
          {busy ? "Comparing…" : "Show the changes"}
        </button>
      </form>
      {error && <p class="error" role="alert" data-testid="compare-error">{error}</p>}
      {diff && fromVersion && toVersion && <DiffView diff={diff} from={fromVersion} to={toVersion} title={checklist.title} />}
    </>
  );
}

/** The question before a draft is published, under the versions' table. */
function PublishConfirm({ version, title, onPublished, onCancel }: {
  version: ChecklistVersion;
  title: string;
  onPublished: (v: ChecklistVersion) => void;
  onCancel: () => void;
}) {
  const [busy, setBusy] = useState(false);
  const [error, setError] = useState("");
  const headId = `publish-head-${version.id}`;
  useEffect(() => document.getElementById(headId)?.focus(), [headId]);

  async function publish() {
    setBusy(true);
    setError("");
    try {
      onPublished(await desk.publishVersion(version.id));
    } catch (e) {
      setError(errorText(e));
      setBusy(false);
    }
  }

  return (
    <div class="desk-confirm" role="group" aria-labelledby={headId} data-testid="publish-confirm" data-version={version.number}>
      <h3 id={headId} tabIndex={-1}>Publish version {version.number} of {title}?</h3>
      <p>
        A published version never changes. New pre-start checks on this checklist are filled against it from now on;
        any later change needs a new draft, and sheets already filled keep the version they were filled against.
      </p>
      {error && <p class="error" role="alert" data-testid="publish-error">{error}</p>}
      <div class="desk-actions">
        <button class="btn btn-primary" type="button" disabled={busy} onClick={() => void publish()} data-testid="publish-yes">
          {busy ? "Publishing…" : `Publish version ${version.number}`}
        </button>
        <button class="btn" type="button" disabled={busy} onClick={onCancel} data-testid="publish-no">
          Keep it a draft
        </button>
      </div>
    </div>
  );
}

function ChecklistSection({ group, onPublished }: { group: Group; onPublished: (v: ChecklistVersion) => void }) {
  const { checklist, versions } = group;
  const head = `checklist-${checklist.id}`;
  const [asking, setAsking] = useState<ChecklistVersion | null>(null);
  return (
    <section class="desk-checklist" aria-labelledby={head} data-testid={`checklist-${checklist.key}${checklist.default ? "-default" : ""}`}>
      <h2 id={head}>{checklist.title}</h2>
      <p class="muted">
        For {subjectWords(checklist.applies_to)} ·{" "}
        {checklist.default ? "Parapet's default checklist: it changes only with a new release of Parapet" : "Your organisation's own checklist"}
      </p>
      <table class="desk-table desk-versions">
        <thead>
          <tr>
            <th scope="col">Version</th>
            <th scope="col">State</th>
            <th scope="col">Published</th>
            <th scope="col">Items</th>
            <th scope="col">Use</th>
          </tr>
        </thead>
        <tbody>
          {versions.map((v) => {
            const published = v.status === "published";
            const blocking = v.items.filter((i) => i.blocking).length;
            return (
              <tr key={v.id} data-testid={`version-${v.number}`} data-status={v.status}>
                <th scope="row">Version {v.number}</th>
                <td>{published ? <Badge kind="safe" word="Published" testid="version-state" /> : <Badge kind="mustdo" word="Draft" testid="version-state" />}</td>
                <td data-testid="version-published">{published ? dateTimeOf(v.published_at) : "Not published"}</td>
                <td>{v.items.length} items, {blocking} blocking</td>
                <td>
                  <div class="desk-actions">
                    <span>{inUseWords(group, v)}</span>
                    {!published && (
                      <button class="btn" type="button" aria-expanded={asking?.id === v.id} onClick={() => setAsking(v)} data-testid="publish">
                        Publish version {v.number}
                      </button>
                    )}
                  </div>
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
      {asking && (
        <PublishConfirm
          key={asking.id}
          version={asking}
          title={checklist.title}
          onCancel={() => setAsking(null)}
          onPublished={(v) => {
            setAsking(null);
            onPublished(v);
          }}
        />
      )}
      {versions.length >= 2 ? <Compare group={group} /> : <p class="muted">One version: nothing to compare yet.</p>}
    </section>
  );
}

export function DeskChecklists() {
  const [groups, setGroups] = useState<Group[] | null>(null);
  const [error, setError] = useState("");
  const [done, setDone] = useState("");

  useEffect(() => {
    Promise.all([desk.checklists(), desk.versions()]).then(
      ([checklists, versions]) => {
        const byId = new Map(versions.map((v) => [v.id, v]));
        const ownPublished = new Set(
          checklists.filter((c) => !c.default && c.versions.some((v) => v.status === "published")).map((c) => c.key),
        );
        const found = checklists.map((checklist) => ({
          checklist,
          versions: checklist.versions
            .map((v) => byId.get(v.id))
            .filter((v): v is ChecklistVersion => v !== undefined)
            .sort((a, b) => a.number - b.number),
          replaced: checklist.default && ownPublished.has(checklist.key),
        }));
        // The organisation's own first, then the defaults; by title within each.
        found.sort((a, b) => Number(a.checklist.default) - Number(b.checklist.default) || a.checklist.title.localeCompare(b.checklist.title));
        setGroups(found);
      },
      (e) => setError(errorText(e)),
    );
  }, []);

  function published(version: ChecklistVersion) {
    setGroups((list) =>
      (list ?? []).map((g) => ({
        ...g,
        versions: g.versions.map((v) => (v.id === version.id ? version : v)),
        // A default is replaced once the organisation's own checklist of its key has a published version.
        replaced: g.replaced || (g.checklist.default && g.checklist.key === version.checklist),
      })),
    );
    setDone(`Version ${version.number} of ${version.title} is published. It never changes from now on.`);
  }

  return (
    <>
      <div class="desk-title">
        <h1>Checklist versions</h1>
      </div>
      <p>
        Each pre-start check is filled against one version of its checklist, and the sheet keeps that version for good.
        Compare two versions to see what changed before a draft is published.
      </p>
      {done && <p class="note" role="status" data-testid="publish-done">{done}</p>}
      {error && <p class="error" role="alert">{error}</p>}
      {!groups && !error && <p class="muted">Loading the checklists…</p>}
      {groups && groups.length === 0 && <p class="muted">No checklists yet.</p>}
      {groups?.map((g) => <ChecklistSection key={g.checklist.id} group={g} onPublished={published} />)}
      <DeskCaution />
    </>
  );
}
