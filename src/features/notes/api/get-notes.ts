import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Note } from '../../../../shared/schemas';
import { api } from '../../../lib/api';
import { notesKeys, notesPath } from './notes-keys';

export interface NotesFilter {
  /** notes pinned to this frame (of the visible decode run) */
  frameId?: number;
  /** text in the note body */
  q?: string;
}

export function fetchNotes(rigId: number, captureId: number, filter: NotesFilter): Promise<Note[]> {
  const params = new URLSearchParams();
  if (filter.frameId !== undefined) params.set('frameId', String(filter.frameId));
  if (filter.q) params.set('q', filter.q);
  const qs = params.toString();
  return api(`${notesPath(rigId, captureId)}${qs ? `?${qs}` : ''}`);
}

export function notesQueryOptions(rigId: number, captureId: number, filter: NotesFilter = {}) {
  return queryOptions({ queryKey: notesKeys.list(rigId, captureId, filter), queryFn: () => fetchNotes(rigId, captureId, filter) });
}

export function useNotes(rigId: number, captureId: number, filter: NotesFilter = {}) {
  return useQuery(notesQueryOptions(rigId, captureId, filter));
}
