import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  resolve: { tsconfigPaths: true },
  // Fonts ship as files: the page's policy (font-src 'self') refuses data: URLs, which Vite
  // would otherwise inline for the small subsets.
  build: { assetsInlineLimit: (file) => (/\.woff2?$/.test(file) ? false : undefined) },
  ssr: {
    // Native and CommonJS-heavy server packages stay outside the server bundle.
    external: ["argon2", "sequelize", "pg", "nodemailer", "smtp-server", "mailparser"],
  },
});
