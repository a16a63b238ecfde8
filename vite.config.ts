import { defineConfig } from "vite";
import react from "@vitejs/plugin-react";
import tailwindcss from "@tailwindcss/vite";

const apiPort = Number(process.env.PORT ?? 3000);

export default defineConfig({
  root: "src",
  publicDir: "public",
  plugins: [react(), tailwindcss()],
  build: { outDir: "../dist/client", emptyOutDir: true, chunkSizeWarningLimit: 1500 },
  server: {
    port: 5173,
    proxy: {
      "/api": `http://localhost:${apiPort}`,
      "/dev": `http://localhost:${apiPort}`,
      "/socket.io": { target: `ws://localhost:${apiPort}`, ws: true },
    },
  },
});
