// Field hints: statistics across many frames, by octet offset of the information field, that
// suggest fields. Types shared by the engine, the draft-map builder and whoever shows them.
import type { FieldRole, FieldType } from '../calls/field-map';
import type { FrameRef } from '../calls/exchanges';

export type HintDirection = 'request' | 'response';

/** One frame as the hints see it: its information field, which way it went, whose it is. */
export interface HintFrame {
  ref: FrameRef;
  direction: HintDirection;
  station: number;
  /** first sample of the frame (order and pairing) */
  sample: number;
  info: Uint8Array;
}

export type HintKind = 'constant' | 'small-set' | 'counter' | 'echo' | 'length' | 'cpm-name' | 'record' | 'record-number' | 'text';

export interface FieldHint {
  /** stable id: direction, selector value (or "all"), kind, offset */
  id: string;
  kind: HintKind;
  /** octet offset in the information field */
  offset: number;
  /** octets the field takes; for a record or text running to the end, the octets it had */
  length: number;
  /** the field type a map would give it */
  type: FieldType;
  /** the role a map would give it, when the hint suggests one */
  role: FieldRole | null;
  /** 0 … 1: the share of frames that agree, tempered by how many there were */
  confidence: number;
  /** one sentence: what was seen, with counts */
  summary: string;
  /** frames (pairs, steps) that agree and that do not */
  support: number;
  contradict: number;
  /** the first frames that agree and that do not (at most 20 each) */
  supporting: FrameRef[];
  contradicting: FrameRef[];
  /** constant and small-set: the values with their counts, most frequent first */
  values?: { value: number; count: number }[];
  /** counter: what it counts by one; acrossCalls: it goes on counting from one call to another (a tag, not a record number) */
  counter?: { scope: 'frame' | 'station' | 'exchange'; acrossCalls: boolean };
  /** echo: the request octet this response octet repeats */
  echo?: { requestOffset: number };
  /** length: value = octets after the field + add */
  lengthAdd?: number;
  /** cpm-name: frames whose name had attribute bits set */
  attributes?: number;
  /** record-number: octet order and width, and other readings the data left open */
  number?: { endian: 'little' | 'big'; bytes: 2 | 3; alternatives: string[] };
  /** record: the record runs to the end of the frame where present */
  toEnd?: boolean;
}

export interface HintGroup {
  direction: HintDirection;
  /** the selector octet's value; null for every frame of the direction */
  selector: number | null;
  frames: number;
  /** frame lengths seen, most frequent first (at most 8) */
  lengths: { length: number; count: number }[];
  hints: FieldHint[];
}

/** What a selector value (a call code, as far as the hints can tell) does. */
export interface CallHint {
  selector: number;
  requests: number;
  responses: number;
  /** the selector value its answers carry (the same, or with a response bit set) */
  answerSelector: number | null;
  /** what the call seems to do with a file, and why */
  file: 'open' | 'read-sequential' | 'read-random' | 'write-sequential' | 'write-random' | null;
  why: string;
}

export interface HintReport {
  /** frames the statistics cover */
  frames: number;
  requests: number;
  responses: number;
  /** requests paired with the next response of the same station */
  pairs: number;
  selectorOffset: number | null;
  /** bits set in every answer's selector and in no request's (a response bit), 0 when none */
  responseMask: number;
  groups: HintGroup[];
  calls: CallHint[];
  /** why some view is empty or weak, in words a user can act on */
  notes: string[];
}
