import path from 'node:path';
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

export default defineConfig(({ command }) => ({
  plugins: [react(), tailwindcss()],
  resolve: {
    // react-router's package exports only its development build (dev-time warnings and checks on
    // every navigation); the client build takes the production build that ships beside it.
    alias: command === 'build' ? [{ find: /^react-router$/, replacement: path.resolve('node_modules/react-router/dist/production/index.mjs') }] : [],
  },
  build: {
    outDir: 'dist/client',
    emptyOutDir: true,
    sourcemap: true,
    rolldownOptions: {
      // Tailwind's generated CSS has no source map to offer; the warning says nothing actionable.
      onLog(level, log, handler) {
        if (log.code === 'SOURCEMAP_BROKEN' && log.plugin?.startsWith('@tailwindcss')) return;
        handler(level, log);
      },
      output: {
        // Libraries change far less often than our code: a separate chunk stays cached across releases.
        codeSplitting: {
          groups: [
            { name: 'react', test: /node_modules[\\/](react|react-dom|react-router|scheduler)[\\/]/ },
            { name: 'vendor', test: /node_modules/ },
          ],
        },
      },
    },
  },
}));
