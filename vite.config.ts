// Client build: Vue, Element Plus on demand, and the API proxy for `vite` dev mode.
import { fileURLToPath, URL } from 'node:url'
import { defineConfig } from 'vite'
import vue from '@vitejs/plugin-vue'
import AutoImport from 'unplugin-auto-import/vite'
import Components from 'unplugin-vue-components/vite'
import { ElementPlusResolver } from 'unplugin-vue-components/resolvers'

export default defineConfig({
  plugins: [
    vue(),
    // Only Element Plus is auto-imported; our own code is imported explicitly so it stays greppable.
    // The type files are written by builds only: a Vitest run sees just the files its tests touch and would shrink them.
    AutoImport({ resolvers: [ElementPlusResolver()], dts: process.env.VITEST ? false : 'auto-imports.d.ts' }),
    Components({ resolvers: [ElementPlusResolver()], dts: process.env.VITEST ? false : 'components.d.ts', dirs: [] }),
  ],
  resolve: {
    alias: {
      '@': fileURLToPath(new URL('./src', import.meta.url)),
      '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
    },
  },
  server: {
    proxy: {
      '/api': 'http://127.0.0.1:8080',
      '/socket.io': { target: 'ws://127.0.0.1:8080', ws: true },
    },
  },
  build: { chunkSizeWarningLimit: 1500 },
})
