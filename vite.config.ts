import path from "node:path";
import { reactRouter } from "@react-router/dev/vite";
import tailwindcss from "@tailwindcss/vite";
import { defineConfig } from "vite";

export default defineConfig({
  plugins: [tailwindcss(), reactRouter()],
  resolve: { alias: { "~": path.resolve(__dirname, "app") } },
  ssr: { external: ["better-sqlite3", "knex", "exceljs", "nodemailer", "pg", "pg-boss"] },
});
