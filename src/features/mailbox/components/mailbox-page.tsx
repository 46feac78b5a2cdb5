import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { isApiError } from '../../../lib/api';
import { formatDateTime } from '../../../lib/format';
import { useSession } from '../../../lib/session';
import { useMailbox } from '../api/get-mailbox';
import { LinkifiedText } from './linkified-text';

export function MailboxPage() {
  const mailbox = useMailbox();
  const email = useSession().user?.email;
  return (
    <div className="space-y-4">
      <div className="flex items-end justify-between gap-4">
        <div>
          <h1 className="text-xl font-semibold">Development mailbox</h1>
          <p className="max-w-2xl text-sm text-muted">
            This server runs in demo or development mode without a mail server, so it keeps its mail here instead of sending
            it. You see the messages addressed to you{email ? (
              <>
                , <span className="font-mono text-text">{email}</span>
              </>
            ) : null}
            , newest first; nobody else can read them. In development mode the server&apos;s console prints every message
            too, e.g. invitations to people who have no account yet.
          </p>
        </div>
        <Button variant="secondary" busy={mailbox.isFetching} onClick={() => mailbox.refetch()}>
          Refresh
        </Button>
      </div>
      {mailbox.isPending ? <p className="text-sm text-muted">Loading messages…</p> : null}
      {mailbox.isError ? (
        <ErrorNotice error={mailbox.error}>
          {isApiError(mailbox.error, 404)
            ? 'This server has no development mailbox: it sends real e-mail (or, without a mail server outside demo and development mode, none at all).'
            : undefined}
        </ErrorNotice>
      ) : null}
      {mailbox.data?.length === 0 ? (
        <p className="text-sm text-muted">No messages to you yet. Invitations and password-reset links sent to your address appear here.</p>
      ) : null}
      <ul className="space-y-3">
        {mailbox.data?.map((message) => (
          <li key={message.id}>
            <Card className="p-4">
              <article aria-label={message.subject}>
                <header className="mb-2 flex flex-wrap items-baseline justify-between gap-2 border-b border-line pb-2">
                  <h2 className="font-semibold">{message.subject}</h2>
                  <span className="text-xs text-muted">{formatDateTime(message.createdAt)}</span>
                </header>
                <p className="mb-2 text-xs text-muted">
                  To <span className="font-mono text-text">{message.to}</span>
                </p>
                <LinkifiedText text={message.text} />
              </article>
            </Card>
          </li>
        ))}
      </ul>
    </div>
  );
}
