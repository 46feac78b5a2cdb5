// The settings finder, link directions and station roster: what a capture itself reveals about
// how to decode it.
export { bytesSource, findSettings, PROBING_CAUTIONS, SettingsFinder, type CaptureSource, type FinderOptions, type FinderProgress, type FinderResult, type FinderWindow, type ReadRequest } from './finder';
export type { FinderCandidate } from './rank';
export { estimateBitTime, estimateClock, formatBitRate, formatSpread, type BitTimeEstimate, type ClockEstimate } from './rate';
export { DEFAULT_BUDGET, type FinderBudget } from './windows';
export { decoderOptionsOf, discover, discoveryOf, framesUnder, linksOf, suggestedSettings, type Discovery, type DiscoverOptions, type SuggestedSettings } from './discover';
export { directionConflicts, inferDirections, LINK_DIRECTIONS, stationRoster, type DirectionEvidence, type DirectionOptions, type DirectionVerdict, type InferredDirection, type RosterStation } from './directions';
