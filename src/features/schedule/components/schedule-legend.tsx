import { frameColours, laneColour, outcomeColours, outcomeWords, requestLineColour, serverFrameColour, waitColours } from './schedule-palette';

function Swatch({ colour, children, mark }: { colour: string; children: string; mark?: string }) {
  return (
    <li className="flex items-center gap-1.5">
      <span className="inline-flex h-3 w-4 items-center justify-center rounded-sm text-[9px] leading-none text-white" style={{ background: colour }} aria-hidden>
        {mark}
      </span>
      {children}
    </li>
  );
}

/** What each colour and mark on the schedule means. */
export function ScheduleLegend() {
  return (
    <ul className="mt-3 flex flex-wrap gap-x-4 gap-y-1 text-xs" aria-label="Schedule legend">
      <Swatch colour={outcomeColours.answered}>{outcomeWords.answered}</Swatch>
      <Swatch colour={outcomeColours.retried} mark="◤">{outcomeWords.retried}</Swatch>
      <Swatch colour={outcomeColours.unanswered} mark="✕">{outcomeWords.unanswered}</Swatch>
      <Swatch colour={frameColours.ok}>Station's frame</Swatch>
      <Swatch colour={serverFrameColour}>Server's frame to it</Swatch>
      <Swatch colour={frameColours['bad-fcs']}>Damaged frame</Swatch>
      <Swatch colour={requestLineColour}>Request line (RTS) up</Swatch>
      <Swatch colour={waitColours.served}>Wait until served</Swatch>
      <Swatch colour={waitColours.starved} mark="▼">Starved wait · passed over</Swatch>
      <Swatch colour={laneColour(0)}>Server visit (colour per station; ticks mark each round)</Swatch>
    </ul>
  );
}
