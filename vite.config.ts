import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  resolve: { tsconfigPaths: true },
  ssr: {
    // Native and CommonJS-heavy server packages stay outside the server bundle.
    external: ["argon2", "sequelize", "pg", "nodemailer", "smtp-server", "mailparser"],
  },
});
