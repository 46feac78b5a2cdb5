import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';

export default defineConfig({
  plugins: [react(), tailwindcss()],
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
});
