import tailwindcss from '@tailwindcss/vite'
import react from '@vitejs/plugin-react'
import { defineConfig } from 'vite'

// The viewer's client. In development `npm run dev` starts the API server and this dev server,
// which proxies /api to it.
export default defineConfig({
  plugins: [react(), tailwindcss()],
  // the manifest tells `pitside serve` which chunks each page loads (server/static.ts: modulepreload)
  build: { outDir: 'dist/web', emptyOutDir: true, manifest: true },
  server: {
    port: 5173,
    proxy: { '/api': `http://127.0.0.1:${process.env.PITSIDE_API_PORT ?? 8080}` },
  },
})
