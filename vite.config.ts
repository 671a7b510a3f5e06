import tailwindcss from '@tailwindcss/vite'
import react from '@vitejs/plugin-react'
import { defineConfig } from 'vite'

// The viewer's client. In development `npm run dev` starts the API server and this dev server,
// which proxies /api to it. `vite build --ssr src/entry-server.tsx` builds the server's rendering of
// the plan page into dist/ssr, beside dist/web (server/plan-page.ts loads it).
export default defineConfig(({ isSsrBuild }) => ({
  plugins: [react(), tailwindcss()],
  build: isSsrBuild
    ? { outDir: 'dist/ssr', emptyOutDir: true, copyPublicDir: false }
    : // the manifest tells `pitside serve` which chunks each page loads (server/static.ts: modulepreload)
      { outDir: 'dist/web', emptyOutDir: true, manifest: true },
  server: {
    port: 5173,
    proxy: { '/api': `http://127.0.0.1:${process.env.PITSIDE_API_PORT ?? 8080}` },
  },
}))
