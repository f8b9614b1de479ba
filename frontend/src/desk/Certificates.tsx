/**
 * Anchors and their certificates: the certificate in force for each anchor, and a form to
 * record a new one with its file as evidence (append-only; an old certificate is never edited). The API gives only the
 * certificate in force, so earlier ones show here only once recorded in this visit.
 */
import { useState } from "preact/hooks";
import { Badge } from "../ui/signs";
import { dayFrom, desk, fieldErrors, type Certification } from "./api";
import { anchorState } from "./anchorState";
import { DeskCaution, ErrorSummary, FieldErrors, invalidProps, useFormErrors, type ErrorField, type Errors } from "./parts";
import { SiteTitle, SiteWaiting, useSite, type SiteData } from "./site";

/** The form's fields in its order, as the summary names them. */
const FIELDS: Record<string, ErrorField> = {
  anchor: { label: "Anchor", id: "cert-anchor" },
  certifier: { label: "Certified by (the competent person)", id: "cert-certifier" },
  certifier_company: { label: "Their company", id: "cert-company" },
  rated_capacity_kn: { label: "Rated capacity", id: "cert-capacity" },
  certified_on: { label: "Certified on", id: "cert-on" },
  valid_until: { label: "Valid until", id: "cert-until" },
  document: { label: "The certificate's file", id: "cert-file" },
};

function CertificationForm({ data, onRecorded }: { data: SiteData; onRecorded: (anchor: number, cert: Certification) => Promise<void> }) {
  const [anchor, setAnchor] = useState("");
  const [certifier, setCertifier] = useState("");
  const [company, setCompany] = useState("");
  const [capacity, setCapacity] = useState("");
  const [on, setOn] = useState(dayFrom(0));
  const [until, setUntil] = useState("");
  const [file, setFile] = useState<File | null>(null);
  const [fileKey, setFileKey] = useState(0);
  const { errors, setErrors, show, shown, form } = useFormErrors();
  const [busy, setBusy] = useState(false);
  const [done, setDone] = useState("");

  async function submit(event: Event) {
    event.preventDefault();
    setDone("");
    const local: Errors = {};
    const kn = Number(capacity.trim().replace(",", "."));
    if (!anchor) local.anchor = ["Choose the anchor."];
    if (!certifier.trim()) local.certifier = ["Name the competent person who certified the anchor."];
    if (!capacity.trim() || !Number.isFinite(kn)) local.rated_capacity_kn = ["Enter the rated capacity in kN, a number."];
    if (!until) local.valid_until = ["Enter the date the certificate runs to."];
    if (Object.keys(local).length) return show(local);
    setBusy(true);
    setErrors({});
    try {
      const id = Number(anchor);
      const cert = await desk.addCertification(id, {
        certifier: certifier.trim(),
        certifier_company: company.trim(),
        rated_capacity_kn: kn,
        certified_on: on,
        valid_until: until,
      }, file);
      const label = data.anchors.find((a) => a.id === id)?.label ?? "";
      setCapacity("");
      setUntil("");
      setFile(null);
      setFileKey((k) => k + 1);
      await onRecorded(id, cert);
      setDone(`Certificate recorded for anchor ${label}: ${cert.rated_capacity_kn} kN, valid until ${cert.valid_until}.`);
    } catch (e) {
      show(fieldErrors(e));
    } finally {
      setBusy(false);
    }
  }

  const err = (field: string) => invalidProps(errors[field] && `err-cert-${field}`);
  return (
    <form class="desk-form" onSubmit={submit} data-testid="cert-form" noValidate ref={form}>
      {done && <p class="note" role="status" data-testid="cert-done">{done}</p>}
      <ErrorSummary errors={errors} fields={FIELDS} head="No certificate was recorded. Put these right:" formId="err-cert-form" shown={shown} />
      <div class="field">
        <label for="cert-anchor">Anchor</label>
        <select id="cert-anchor" value={anchor} onChange={(e) => setAnchor(e.currentTarget.value)} {...err("anchor")}>
          <option value="">Choose the anchor</option>
          {data.anchors.map((a) => <option key={a.id} value={String(a.id)}>{a.label}</option>)}
        </select>
        <FieldErrors id="err-cert-anchor" messages={errors.anchor} />
      </div>
      <div class="field">
        <label for="cert-certifier">Certified by (the competent person)</label>
        <input id="cert-certifier" type="text" autocomplete="off" value={certifier} onInput={(e) => setCertifier(e.currentTarget.value)} {...err("certifier")} />
        <FieldErrors id="err-cert-certifier" messages={errors.certifier} />
      </div>
      <div class="field">
        <label for="cert-company">Their company <span class="muted">(optional)</span></label>
        <input id="cert-company" type="text" autocomplete="off" value={company} onInput={(e) => setCompany(e.currentTarget.value)} {...err("certifier_company")} />
        <FieldErrors id="err-cert-certifier_company" messages={errors.certifier_company} />
      </div>
      <div class="field">
        <label for="cert-capacity">Rated capacity</label>
        <span class="input-unit">
          <input id="cert-capacity" type="text" inputMode="decimal" autocomplete="off" value={capacity} onInput={(e) => setCapacity(e.currentTarget.value)} {...err("rated_capacity_kn")} />
          <span class="unit">kN</span>
        </span>
        <FieldErrors id="err-cert-rated_capacity_kn" messages={errors.rated_capacity_kn} />
      </div>
      <div class="field">
        <label for="cert-on">Certified on</label>
        <input id="cert-on" type="date" value={on} onInput={(e) => setOn(e.currentTarget.value)} {...err("certified_on")} />
        <FieldErrors id="err-cert-certified_on" messages={errors.certified_on} />
      </div>
      <div class="field">
        <label for="cert-until">Valid until</label>
        <input id="cert-until" type="date" value={until} onInput={(e) => setUntil(e.currentTarget.value)} {...err("valid_until")} />
        <FieldErrors id="err-cert-valid_until" messages={errors.valid_until} />
      </div>
      <div class="field">
        <label for="cert-file">The certificate's file <span class="muted">(PDF, PNG or JPEG, at most 10 MB)</span></label>
        <input key={fileKey} id="cert-file" type="file" accept="application/pdf,image/png,image/jpeg" onChange={(e) => setFile(e.currentTarget.files?.[0] ?? null)} {...err("document")} />
        <FieldErrors id="err-cert-document" messages={errors.document} />
      </div>
      <p class="muted small">
        The file is kept unchanged as evidence, with its SHA-256 fingerprint; a certificate is never edited, a new one is recorded.
      </p>
      <button class="btn btn-primary" type="submit" disabled={busy} data-testid="cert-submit">
        {busy ? "Recording…" : "Record the certificate"}
      </button>
    </form>
  );
}

export function DeskCertificates({ siteId }: { siteId?: number }) {
  const { data, empty, error, reload } = useSite(siteId);
  // Certificates recorded in this visit, per anchor (newest first); the server lists only the one in force.
  const [recorded, setRecorded] = useState<Record<number, Certification[]>>({});
  if (!data) return <SiteWaiting title="Anchors and certificates" empty={empty} error={error} />;
  const today = dayFrom(0);
  const anchors = [...data.anchors].sort((a, b) => a.label.localeCompare(b.label, undefined, { numeric: true }));

  async function onRecorded(anchor: number, cert: Certification) {
    setRecorded((r) => ({ ...r, [anchor]: [cert, ...(r[anchor] ?? [])] }));
    await reload();
  }

  return (
    <>
      <SiteTitle title="Anchors and certificates" page="anchors" data={data} />
      <div class="desk-columns">
        <section aria-labelledby="certs-head">
          <h2 id="certs-head">Certificates, the one in force first</h2>
          <ul class="list desk-items desk-certs">
            {anchors.map((a) => {
              const state = anchorState(a, data.log, data.intervalDays, today);
              const current = a.certification;
              const earlier = (recorded[a.id] ?? []).filter((c) => c.id !== current?.id);
              return (
                <li key={a.id} class="card" data-testid={`certs-${a.label}`}>
                  <div class="desk-item-head">
                    <strong class="card-title">Anchor {a.label}</strong>
                    <Badge kind={state.sign} word={state.word} />
                  </div>
                  {current ? (
                    <dl class="desk-cert" data-testid="cert-current">
                      <dt>{current.valid_until < today ? "Last certificate (lapsed)" : "In force"}</dt>
                      <dd>{current.rated_capacity_kn} kN, {current.certified_on} to {current.valid_until}</dd>
                      <dt>Certified by</dt>
                      <dd>{current.certifier}{current.certifier_company ? `, ${current.certifier_company}` : ""}</dd>
                      {current.document_url && (
                        <>
                          <dt>File</dt>
                          <dd>
                            <a class="inline-link" href={current.document_url} download data-testid="cert-file-link">Certificate file</a>{" "}
                            <span class="muted small" title={current.document_sha256}>SHA-256 {current.document_sha256.slice(0, 12)}…</span>
                          </dd>
                        </>
                      )}
                    </dl>
                  ) : (
                    <p class="muted">No certificate in force.</p>
                  )}
                  {earlier.length > 0 && (
                    <p class="muted small">Also recorded in this visit: {earlier.map((c) => `${c.rated_capacity_kn} kN to ${c.valid_until}`).join("; ")}.</p>
                  )}
                </li>
              );
            })}
          </ul>
          <p class="muted small">Earlier certificates are kept on the server; this screen is given only the one in force.</p>
        </section>
        <section aria-labelledby="cert-add-head" class="desk-side">
          <h2 id="cert-add-head">Record a certificate</h2>
          {data.site.owned ? (
            <CertificationForm data={data} onRecorded={onRecorded} />
          ) : (
            <p class="muted" data-testid="cert-owner-only">Only the building's owner records its anchors' certificates.</p>
          )}
        </section>
      </div>
      <DeskCaution />
    </>
  );
}
