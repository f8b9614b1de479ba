/// <reference lib="webworker" />
/**
 * The service worker (Workbox): precache the app shell, keep the last copy of every API read
 * (network first, so a reload without signal still shows today's jobs and the checklists),
 * and answer page loads from the shell when the network is gone.
 */
import { clientsClaim } from "workbox-core";
import { ExpirationPlugin } from "workbox-expiration";
import { cleanupOutdatedCaches, matchPrecache, precacheAndRoute } from "workbox-precaching";
import { NavigationRoute, registerRoute } from "workbox-routing";
import { NetworkFirst } from "workbox-strategies";

declare const self: ServiceWorkerGlobalScope & { __WB_MANIFEST: (string | { url: string; revision: string | null })[] };

const SHELL = "/static/app/index.html";
/** Marks an API answer the worker kept from before (src/api.ts reads it as no connection). */
const KEPT_HEADER = "X-Parapet-Kept";

self.skipWaiting();
clientsClaim();
cleanupOutdatedCaches();
precacheAndRoute(self.__WB_MANIFEST);

registerRoute(
  new NavigationRoute(
    new NetworkFirst({
      cacheName: "parapet-pages",
      networkTimeoutSeconds: 4,
      plugins: [{ handlerDidError: async () => (await matchPrecache(SHELL)) ?? Response.error() }],
    }),
  ),
);

registerRoute(
  ({ url, request }) =>
    url.origin === self.location.origin && url.pathname.startsWith("/api/v1/") && request.method === "GET",
  new NetworkFirst({
    cacheName: "parapet-api",
    networkTimeoutSeconds: 6,
    plugins: [
      new ExpirationPlugin({ maxEntries: 300, maxAgeSeconds: 14 * 24 * 3600 }),
      // A kept answer says so: read as the server's answer now, a job's state from hours ago
      // was shown as "State from the server" after a reload without signal.
      {
        cachedResponseWillBeUsed: async ({ cachedResponse }) => {
          if (!cachedResponse) return cachedResponse;
          const headers = new Headers(cachedResponse.headers);
          headers.set(KEPT_HEADER, "1");
          return new Response(cachedResponse.body, { status: cachedResponse.status, statusText: cachedResponse.statusText, headers });
        },
      },
    ],
  }),
);
