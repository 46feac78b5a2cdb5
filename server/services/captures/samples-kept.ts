import { conflict } from '../../http/errors';
import type { CaptureRow } from './rows';

/**
 * Work that reads the capture file (detection, settings checks, decoding again, the waveform)
 * needs the samples; a capture decoded in the uploader's browser has only its frames here.
 */
export function requireSamples(c: CaptureRow, what: string): void {
  if (!c.samplesKept) {
    throw conflict(
      `The samples of this capture stayed on the uploader's machine (it was decoded in the browser and only its frames were uploaded), so ${what} is not possible here. Upload the capture file itself to do that.`,
    );
  }
}
