import { useEffect, useRef, useState } from 'react';
import type { OutboxMessage } from '@counterpoise/contracts/admin';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card } from '../../../components/ui/card.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { isApiError } from '../../../lib/api-client.js';
import { cn } from '../../../lib/cn.js';
import { useOutbox } from '../api/get-outbox.js';
import { MessageText } from './message-text.js';

function formatTime(iso: string): string {
  const date = new Date(iso);
  if (Number.isNaN(date.getTime())) return iso;
  return date.toISOString().replace('T', ' ').slice(0, 19) + ' UTC';
}

export function OutboxView() {
  const outbox = useOutbox();
  const [selectedId, setSelectedId] = useState<string | null>(null);

  if (outbox.isPending) return <LoadingState label="Loading the outbox…" />;
  if (outbox.isError) {
    if (isApiError(outbox.error, 'not_found')) {
      return (
        <Callout tone="info" title="The outbox is off here">
          This installation sends real e-mail, so there is no local outbox to read.
        </Callout>
      );
    }
    return <ErrorState error={outbox.error} onRetry={() => void outbox.refetch()} />;
  }

  const messages = outbox.data;
  const selected = messages.find((m) => m.id === selectedId) ?? messages[0] ?? null;

  return (
    <div className="flex flex-col gap-4">
      <div className="flex items-center justify-between gap-3">
        <p className="text-sm text-graphite" aria-live="polite">
          <span className="figure">{messages.length}</span> {messages.length === 1 ? 'message' : 'messages'},
          newest first
        </p>
        <Button variant="secondary" size="sm" busy={outbox.isFetching} onClick={() => void outbox.refetch()}>
          Refresh
        </Button>
      </div>
      {messages.length === 0 ? (
        <EmptyState title="No messages yet">
          Invitations, password resets and alert digests sent by this installation appear here.
        </EmptyState>
      ) : (
        <div className="grid gap-4 lg:grid-cols-[minmax(18rem,2fr)_3fr]">
          <Card className="overflow-hidden">
            <ul aria-label="Messages" className="divide-y divide-rule">
              {messages.map((m) => (
                <li key={m.id}>
                  <button
                    type="button"
                    onClick={() => setSelectedId(m.id)}
                    aria-current={selected?.id === m.id ? 'true' : undefined}
                    className={cn(
                      'flex w-full flex-col gap-0.5 border-l-4 px-4 py-3 text-left hover:bg-paper',
                      selected?.id === m.id ? 'border-spruce bg-spruce-wash/60' : 'border-transparent',
                    )}
                  >
                    <span className="font-semibold text-ink">{m.subject || '(no subject)'}</span>
                    <span className="text-sm text-graphite">To {m.to.join(', ')}</span>
                    <span className="figure text-xs text-graphite">{formatTime(m.receivedAt)}</span>
                  </button>
                </li>
              ))}
            </ul>
          </Card>
          {selected && <MessagePane message={selected} />}
        </div>
      )}
    </div>
  );
}

function MessagePane({ message }: { message: OutboxMessage }) {
  const headingRef = useRef<HTMLHeadingElement>(null);
  const first = useRef(true);
  useEffect(() => {
    // Keep focus where it is on first render; after a pick, take the reader to the message.
    if (first.current) {
      first.current = false;
      return;
    }
    headingRef.current?.focus();
  }, [message.id]);

  return (
    <Card>
      <article aria-labelledby="outbox-message-subject">
        <header className="border-b border-rule px-5 py-4">
          <h2
            id="outbox-message-subject"
            ref={headingRef}
            tabIndex={-1}
            className="text-lg font-semibold text-ink"
          >
            {message.subject || '(no subject)'}
          </h2>
          <dl className="mt-2 grid grid-cols-[auto_1fr] gap-x-3 gap-y-0.5 text-sm">
            <dt className="text-graphite">From</dt>
            <dd className="break-all">{message.from}</dd>
            <dt className="text-graphite">To</dt>
            <dd className="break-all">{message.to.join(', ')}</dd>
            <dt className="text-graphite">Received</dt>
            <dd className="figure">{formatTime(message.receivedAt)}</dd>
          </dl>
        </header>
        <div className="px-5 py-4">
          <MessageText text={message.text} />
          {message.html && (
            <p className="mt-4 border-t border-rule pt-3 text-xs text-graphite">
              This message also has an HTML part; only its text part is shown.
            </p>
          )}
        </div>
      </article>
    </Card>
  );
}
