import type { AnomalyKindName, DamageCauseName } from '../../../../shared/schemas';

export const causeLabels: Record<DamageCauseName, string> = {
  'bad-fcs-explained': 'Bad FCS, one bit explains it',
  'bad-fcs-unexplained': 'Bad FCS, no single bit',
  abort: 'Aborted',
  short: 'Short',
  residue: 'Residue (bit lost or doubled)',
  'line-anomaly': 'Good frame, line anomaly',
  'tx-underrun': 'Transmitter under-run (frame cut short)',
  'underrun-fragment': 'Fragment after an under-run',
  'rx-overrun': 'Receiver over-run symptom',
  'octet-timing': 'Good frame, clock periods stretched or missing',
};

/** Our own palette for the causes, shared by the group list and the strip. */
export const causeColours: Record<DamageCauseName, string> = {
  'bad-fcs-explained': '#e0582f',
  'bad-fcs-unexplained': '#b8322a',
  abort: '#a33fb8',
  short: '#d98b1a',
  residue: '#4f6fd6',
  'line-anomaly': '#1f9e94',
  'tx-underrun': '#c2417a',
  'underrun-fragment': '#8a5a3c',
  'rx-overrun': '#3f8f3a',
  'octet-timing': '#6b7a8f',
};

export const anomalyLabels: Record<AnomalyKindName, string> = {
  glitch: 'pulses shorter than half a bit',
  'clock-missing': 'clock edges missing',
  'clock-extra': 'clock edges extra',
  'clock-stretch': 'clock periods stretched',
  silence: 'silences inside a frame',
  unknown: 'unknown levels',
};
