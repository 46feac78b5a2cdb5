// Our own colours for the schedule view: exchanges by outcome, frames by status, each station's
// visits, waits on the request line. Kept in one place so the canvas and the legend agree.

export const outcomeColours: Record<string, string> = {
  answered: '#3a9d7a',
  retried: '#d9951f',
  unanswered: '#cf4a3c',
};

export const outcomeWords: Record<string, string> = {
  answered: 'Answered',
  retried: 'Retried (sent again before the answer)',
  unanswered: 'Unanswered',
};

export const frameColours: Record<string, string> = {
  ok: '#5b7bbf',
  'bad-fcs': '#c2417a',
  abort: '#8e3fb0',
  short: '#c27c1a',
  residue: '#3f6fd6',
};

/** server frames: the same hue, lighter, so the two directions tell apart in one lane */
export const serverFrameColour = '#8aa4d6';
export const requestLineColour = 'rgba(120, 134, 160, 0.28)';
export const waitColours = { served: '#9aa6b8', withdrawn: '#b8a58a', 'capture-ended': '#b8a58a', starved: '#9b3fb0' } as const;

/** one colour per lane for the server's visits row */
export const laneColours = ['#2f7f9e', '#b5652b', '#5a8f3a', '#8a4fa8', '#a83f55', '#3f5fa8', '#7a7a2f', '#2f9e86'];
export const laneColour = (i: number) => laneColours[i % laneColours.length];
