import { validateFieldMap, type FieldMapInput } from '../../../../shared/decoder/calls';
import { diffFieldMaps } from './field-map-diff';

// The editor checks its draft and diffs two versions in background renders, which React drops and
// starts again whenever an answer or a keystroke comes in first; a result kept by the document
// it was worked out from survives that, so a large map is checked once per edit.

const checks = new WeakMap<FieldMapInput, ReturnType<typeof validateFieldMap>>();
const diffs = new WeakMap<FieldMapInput, WeakMap<FieldMapInput, ReturnType<typeof diffFieldMaps>>>();

/** Whether `doc` was checked already (a draft the route's loader checked while the page's requests were out). */
export function isChecked(doc: FieldMapInput): boolean {
  return checks.has(doc);
}

export function checkDraft(doc: FieldMapInput): ReturnType<typeof validateFieldMap> {
  let result = checks.get(doc);
  if (!result) checks.set(doc, (result = validateFieldMap(doc)));
  return result;
}

export function diffVersions(older: FieldMapInput, newer: FieldMapInput): ReturnType<typeof diffFieldMaps> {
  let byNewer = diffs.get(older);
  if (!byNewer) diffs.set(older, (byNewer = new WeakMap()));
  let result = byNewer.get(newer);
  if (!result) byNewer.set(newer, (result = diffFieldMaps(older, newer)));
  return result;
}
