/**
 * Which "not signed in" answers end a session on this phone. Signing out is not a lapse: the
 * screens still open go on asking the server while the sign-out runs, and their refusals must
 * not bring the sign-in form back filled in with the name of the person who just left.
 */
import { afterEach, beforeEach, describe, expect, it, vi } from "vitest";
import { api, ApiError, currentSession } from "../src/api";
import { getStatus, setStatus } from "../src/status";

const notSignedIn = () =>
  new Response(JSON.stringify({ detail: "Sign in first.", code: "not_authenticated" }), {
    status: 403,
    headers: { "Content-Type": "application/json" },
  });
const signedIn = () =>
  new Response(JSON.stringify({ id: 7, username: "kestrel", name: "", role: "operator" }), {
    status: 200,
    headers: { "Content-Type": "application/json" },
  });

describe("a session's end", () => {
  const fetchMock = vi.fn<typeof fetch>();
  beforeEach(() => {
    fetchMock.mockReset();
    vi.stubGlobal("fetch", fetchMock);
    vi.stubGlobal("document", { cookie: "csrftoken=abc" });
    setStatus({ signedOut: false, lastError: null });
  });
  afterEach(() => {
    vi.unstubAllGlobals();
  });

  it("is heard when the server refuses a request of the session in use", async () => {
    fetchMock.mockResolvedValueOnce(signedIn());
    await api.login("kestrel", "pw");
    fetchMock.mockResolvedValueOnce(notSignedIn());
    await expect(api.me()).rejects.toBeInstanceOf(ApiError);
    expect(getStatus().signedOut).toBe(true);
  });

  it("is not heard from a request a screen sends while signing out", async () => {
    fetchMock.mockResolvedValueOnce(signedIn());
    await api.login("kestrel", "pw");
    let answerLogout: (r: Response) => void = () => undefined;
    fetchMock.mockReturnValueOnce(new Promise<Response>((resolve) => (answerLogout = resolve)));
    const leaving = api.logout();
    // A screen still open asks for today's jobs while the sign-out is on its way.
    fetchMock.mockResolvedValueOnce(notSignedIn());
    const refused = await api.me().catch((e: unknown) => e);
    expect(refused).toBeInstanceOf(ApiError);
    expect((refused as ApiError).endsSession).toBe(false);
    expect(getStatus().signedOut).toBe(false);
    answerLogout(new Response(null, { status: 204 }));
    await leaving;
    // And after it, until the next sign-in.
    fetchMock.mockResolvedValueOnce(notSignedIn());
    await expect(api.me()).rejects.toBeInstanceOf(ApiError);
    expect(getStatus().signedOut).toBe(false);
  });

  it("is heard again once the next person signs in", async () => {
    fetchMock.mockResolvedValueOnce(new Response(null, { status: 204 }));
    await api.logout();
    fetchMock.mockResolvedValueOnce(signedIn());
    await api.login("merlin", "pw");
    fetchMock.mockResolvedValueOnce(notSignedIn());
    await expect(api.me()).rejects.toBeInstanceOf(ApiError);
    expect(getStatus().signedOut).toBe(true);
  });

  it("a sign-out that never reached the server leaves the session watched", async () => {
    fetchMock.mockResolvedValueOnce(signedIn());
    await api.login("kestrel", "pw");
    fetchMock.mockRejectedValueOnce(new TypeError("Failed to fetch"));
    await expect(api.logout()).rejects.toThrow();
    fetchMock.mockResolvedValueOnce(notSignedIn());
    await expect(api.me()).rejects.toBeInstanceOf(ApiError);
    expect(getStatus().signedOut).toBe(true);
  });

  it("an answer built elsewhere (the desk's files) keeps the session it was sent under", () => {
    const sent = currentSession();
    expect(new ApiError(403, { code: "not_authenticated" }, sent).endsSession).toBe(true);
    const afterLogin = new ApiError(403, { code: "not_authenticated" }, sent - 1);
    expect(afterLogin.endsSession).toBe(false);
  });
});
