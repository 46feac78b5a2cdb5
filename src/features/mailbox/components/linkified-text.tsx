import { Fragment } from 'react';

const urlPattern = /(https?:\/\/[^\s<>"')]+)/g;

/** Plain mail text with its web addresses made clickable; nothing else is interpreted. */
export function LinkifiedText({ text }: { text: string }) {
  const parts = text.split(urlPattern);
  return (
    <pre className="whitespace-pre-wrap break-words font-mono text-xs leading-relaxed">
      {parts.map((part, i) =>
        i % 2 === 1 ? (
          <a key={i} href={part} className="text-link underline underline-offset-2">
            {part}
          </a>
        ) : (
          <Fragment key={i}>{part}</Fragment>
        ),
      )}
    </pre>
  );
}
