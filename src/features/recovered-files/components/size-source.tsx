import { Link } from 'react-router';
import type { FileSizeSourceName, RecoveredFileSummary } from '../../../../shared/schemas';

/** The answer (or writes) a file's record count came from, in words. */
const sourceWords: Record<FileSizeSourceName, string> = {
  'end-of-file': 'the end-of-file answer',
  'compute-file-size': 'the compute-file-size answer',
  open: 'the open answer (its record count, extent and module)',
  written: 'the writes',
  'records-seen': 'the highest record seen',
};

/**
 * Where the file's size came from and whether its end is known: "size from the compute-file-size
 * answer of exchange #123" (a link to that exchange in Round trips).
 */
export function SizeSource({ file, exchangeHref }: { file: RecoveredFileSummary; exchangeHref: (exchangeId: number) => string }) {
  const end = file.endKnown ? 'end known' : 'end not known';
  if (file.sizeSource === undefined) {
    return <p className="font-sans text-muted">{end}</p>;
  }
  const id = file.sizeExchangeId ?? null;
  return (
    <p className="font-sans text-muted" data-testid="size-source">
      {end} · size from {sourceWords[file.sizeSource]}
      {id !== null ? (
        <>
          {file.sizeSource === 'written' ? ', last in ' : ' of '}
          <Link to={exchangeHref(id)} className="text-link hover:underline">
            exchange #{id}
          </Link>
        </>
      ) : null}
      {file.sizeSource === 'records-seen' ? ': no answer stated it' : ''}
    </p>
  );
}
