import { useCallback, useEffect, useRef, useState } from 'react';
import { captureSettingsSchema, type CaptureSettings } from '../../../../shared/schemas';
import type { FromWorker, LocalHints, LocalResult, PreviewFrame, ToWorker } from '../local-decode/messages';

export type LocalDecodeState =
  | { phase: 'idle' }
  | { phase: 'finding'; bytesRead: number; budget: number }
  | { phase: 'not-found'; summary: string; advice: string[] }
  | { phase: 'decoding'; settings: CaptureSettings; summary: string; bytesRead: number; total: number; frames: number }
  | { phase: 'done'; settings: CaptureSettings; summary: string; result: LocalResult }
  | { phase: 'failed'; error: string };

/**
 * Runs the settings finder and the decoder on a local file in a module worker (one per file, ended
 * when the page leaves or another file comes). The first frames arrive while the decode runs.
 */
export function useLocalDecode() {
  const [state, setState] = useState<LocalDecodeState>({ phase: 'idle' });
  const [frames, setFrames] = useState<PreviewFrame[]>([]);
  const worker = useRef<Worker | null>(null);

  const stop = useCallback(() => {
    worker.current?.terminate();
    worker.current = null;
  }, []);
  useEffect(() => stop, [stop]);

  const start = useCallback(
    (file: File, hints: LocalHints) => {
      stop();
      setFrames([]);
      setState({ phase: 'finding', bytesRead: 0, budget: file.size });
      const w = new Worker(new URL('../local-decode/decode.worker.ts', import.meta.url), { type: 'module', name: 'local-decode' });
      worker.current = w;
      let summary = '';
      let settings: CaptureSettings | null = null;
      const send = (m: ToWorker) => w.postMessage(m);
      w.onmessage = (e: MessageEvent<FromWorker>) => {
        const m = e.data;
        switch (m.type) {
          case 'find-progress':
            setState({ phase: 'finding', bytesRead: m.bytesRead, budget: m.budget });
            break;
          case 'found': {
            summary = m.summary;
            const parsed = m.candidate ? captureSettingsSchema.safeParse(m.candidate) : null;
            if (!parsed?.success) {
              setState({ phase: 'not-found', summary: m.summary, advice: m.advice });
              stop();
              break;
            }
            settings = parsed.data;
            setState({ phase: 'decoding', settings, summary, bytesRead: 0, total: file.size, frames: 0 });
            send({ type: 'decode', file, settings });
            break;
          }
          case 'progress':
            if (settings) setState({ phase: 'decoding', settings, summary, bytesRead: m.bytesRead, total: m.total, frames: m.frames });
            break;
          case 'frames':
            setFrames((f) => [...f, ...m.frames]);
            break;
          case 'done':
            if (settings) setState({ phase: 'done', settings, summary, result: m.result });
            stop();
            break;
          case 'failed':
            setState({ phase: 'failed', error: m.error });
            stop();
            break;
        }
      };
      w.onerror = (e) => {
        setState({ phase: 'failed', error: `The decoder in this tab stopped: ${e.message || 'unknown error'}. Upload the capture instead and let the server decode it.` });
        stop();
      };
      send({ type: 'find', file, hints });
    },
    [stop],
  );

  const reset = useCallback(() => {
    stop();
    setFrames([]);
    setState({ phase: 'idle' });
  }, [stop]);

  return { state, frames, start, reset };
}
