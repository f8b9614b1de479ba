import { defineConfig } from "vitest/config";
import { VitePWA } from "vite-plugin-pwa";

export default defineConfig({
  base: "/static/app/",
  oxc: { jsx: { runtime: "automatic", importSource: "preact" } },
  build: {
    outDir: "../compliance/static/app",
    emptyOutDir: true,
    target: "es2022",
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
