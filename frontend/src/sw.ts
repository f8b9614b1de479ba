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
    plugins: [new ExpirationPlugin({ maxEntries: 300, maxAgeSeconds: 14 * 24 * 3600 })],
  }),
);
