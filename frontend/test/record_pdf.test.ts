/** The signed PDF on the sign-off screen: 202 while it renders, asked again after Retry-After. */
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { pdfWords, retryAfterSeconds, watchPdf, type PdfState } from "../src/record_pdf";

const rendering = (retryAfter: string | null) =>
  new Response(JSON.stringify({ status: "rendering", detail: "The record is sealed; its PDF is being rendered." }), {
    status: 202,
    headers: retryAfter === null ? { "Content-Type": "application/json" } : { "Content-Type": "application/json", "Retry-After": retryAfter },
  });
const pdf = () => new Response("%PDF-1.7 ...", { status: 200, headers: { "Content-Type": "application/pdf" } });

describe("retryAfterSeconds", () => {
  // Retry-After is delay-seconds or an HTTP-date: RFC 9110, section 10.2.3.
  it("reads seconds, or an HTTP date from now", () => {
    expect(retryAfterSeconds("5")).toBe(5);
    const now = Date.parse("2026-06-01T10:00:00Z");
    expect(retryAfterSeconds("Mon, 01 Jun 2026 10:00:12 GMT", now)).toBe(12);
  });
  it("waits 5 s when the header is missing or unreadable, and between 1 s and 5 minutes otherwise", () => {
    expect(retryAfterSeconds(null)).toBe(5);
    expect(retryAfterSeconds("soon")).toBe(5);
    expect(retryAfterSeconds("0")).toBe(1);
    expect(retryAfterSeconds("86400")).toBe(300);
  });
});

describe("watchPdf", () => {
  const fetchMock = vi.fn<typeof fetch>();
  beforeEach(() => {
    vi.useFakeTimers();
    fetchMock.mockReset();
    vi.stubGlobal("fetch", fetchMock);
  });
  afterEach(() => {
    vi.useRealTimers();
    vi.unstubAllGlobals();
  });

  it("says the PDF is being prepared, asks again after Retry-After, then offers it", async () => {
    fetchMock.mockResolvedValueOnce(rendering("5")).mockResolvedValueOnce(rendering("3")).mockResolvedValueOnce(pdf());
    const seen: PdfState[] = [];
    watchPdf(7, (state) => seen.push(state));

    await vi.advanceTimersByTimeAsync(0);
    expect(fetchMock).toHaveBeenCalledTimes(1);
    expect(fetchMock.mock.calls[0]![0]).toBe("/api/v1/records/7/pdf/");
    expect(seen).toEqual([{ kind: "preparing", retryAfterS: 5 }]);
    expect(pdfWords(seen[0]!)).toMatch(/^The signed PDF is being prepared\. The phone asks again in 5 s/);

    await vi.advanceTimersByTimeAsync(4900);
    expect(fetchMock).toHaveBeenCalledTimes(1); // not before the server said
    await vi.advanceTimersByTimeAsync(100);
    expect(fetchMock).toHaveBeenCalledTimes(2);
    expect(seen.at(-1)).toEqual({ kind: "preparing", retryAfterS: 3 });

    await vi.advanceTimersByTimeAsync(3000);
    expect(fetchMock).toHaveBeenCalledTimes(3);
    expect(seen.at(-1)).toEqual({ kind: "ready" });

    await vi.advanceTimersByTimeAsync(60_000);
    expect(fetchMock).toHaveBeenCalledTimes(3); // ready: no more asking
  });

  it("keeps saying it is being prepared without signal, and asks again later", async () => {
    fetchMock.mockRejectedValueOnce(new TypeError("Failed to fetch")).mockResolvedValueOnce(pdf());
    const seen: PdfState[] = [];
    watchPdf(7, (state) => seen.push(state));
    await vi.advanceTimersByTimeAsync(0);
    expect(seen).toEqual([{ kind: "offline", retryAfterS: 15 }]);
    expect(pdfWords(seen[0]!)).toMatch(/^The signed PDF is being prepared\. No connection/);
    await vi.advanceTimersByTimeAsync(15_000);
    expect(seen.at(-1)).toEqual({ kind: "ready" });
  });

  it("stops asking when the screen closes", async () => {
    fetchMock.mockResolvedValue(rendering(null));
    const seen: PdfState[] = [];
    const stop = watchPdf(7, (state) => seen.push(state));
    await vi.advanceTimersByTimeAsync(0);
    expect(seen).toEqual([{ kind: "preparing", retryAfterS: 5 }]);
    stop();
    await vi.advanceTimersByTimeAsync(60_000);
    expect(fetchMock).toHaveBeenCalledTimes(1);
  });

  it("gives up in words when the server refuses the PDF", async () => {
    fetchMock.mockResolvedValueOnce(new Response(JSON.stringify({ detail: "Not found." }), { status: 404 }));
    const seen: PdfState[] = [];
    watchPdf(7, (state) => seen.push(state));
    await vi.advanceTimersByTimeAsync(60_000);
    expect(seen).toEqual([{ kind: "refused", message: "Not found." }]);
    expect(pdfWords(seen[0]!)).toBe("The signed PDF cannot be fetched: Not found.");
    expect(fetchMock).toHaveBeenCalledTimes(1);
  });
});
