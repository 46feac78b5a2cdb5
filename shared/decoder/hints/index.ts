// Field hints: statistics across many frames that suggest fields, and a draft field map from them.
export { FieldHints, fieldHints, hintFrameOf, type HintOptions } from './field-hints';
export type { CallHint, FieldHint, HintDirection, HintFrame, HintGroup, HintKind, HintReport } from './types';
export { draftFieldMap, type DraftOptions } from './draft';
