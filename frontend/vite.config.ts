import { defineConfig } from "vitest/config";
import { VitePWA } from "vite-plugin-pwa";

export default defineConfig({
  base: "/static/app/",
  oxc: { jsx: { runtime: "automatic", importSource: "preact" } },
  build: {
    outDir: "../compliance/static/app",
    emptyOutDir: true,
    target: "es2022",
    // Browsers that run this app preload modules themselves; where one does not, the lazy
    // screens load a moment later, nothing more. The polyfill cost ~300 bytes of first load.
    modulePreload: { polyfill: false },
  },
  plugins: [
    VitePWA({
      strategies: "injectManifest",
      srcDir: "src",
      filename: "sw.ts",
      injectRegister: false,
      manifest: false,
      injectManifest: {
        globPatterns: ["**/*.{js,css,html,svg,png,webmanifest}"],
        modifyURLPrefix: { "": "/static/app/" },
      },
    }),
  ],
  test: {
    include: ["test/**/*.test.ts"],
  },
});
