import { queryOptions, useQuery } from '@tanstack/react-query';
import type { MailMessage } from '../../../../shared/schemas';
import { api } from '../../../lib/api';

export const mailboxKeys = {
  all: ['mailbox'] as const,
  messages: () => [...mailboxKeys.all, 'messages'] as const,
};

export function fetchMailbox(): Promise<MailMessage[]> {
  return api('/api/dev/mailbox');
}

export function mailboxQueryOptions() {
  return queryOptions({ queryKey: mailboxKeys.messages(), queryFn: fetchMailbox, staleTime: 0 });
}

export function useMailbox() {
  return useQuery(mailboxQueryOptions());
}
