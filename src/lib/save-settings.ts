import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CaptureSettingsInput, CaptureSummaryRow } from '../../shared/schemas';
import { api } from './api';
import { captureKeys } from '../features/captures/api/capture-keys';
import { captureScope } from './scope';

export function saveSettings(rigId: number, captureId: number, settings: CaptureSettingsInput): Promise<CaptureSummaryRow> {
  return api(`${captureScope(rigId, captureId).path}/settings`, { method: 'PUT', body: settings });
}

export function useSaveSettings(rigId: number, captureId: number) {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (settings: CaptureSettingsInput) => saveSettings(rigId, captureId, settings),
    onSuccess: (row) => {
      queryClient.setQueryData(captureKeys.detail(rigId, captureId), row);
      return queryClient.invalidateQueries({ queryKey: captureKeys.list(rigId) });
    },
  });
}
