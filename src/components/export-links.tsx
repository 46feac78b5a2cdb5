/** "Export CSV · JSON": plain links the server answers with a file (it streams, so size is no limit). */
export function ExportLinks({ href, what }: { href: (format: 'csv' | 'json') => string; what: string }) {
  return (
    <span className="inline-flex items-center gap-1.5 text-xs" role="group" aria-label={`Export ${what}`}>
      <span className="text-muted">Export</span>
      <a href={href('csv')} download className="rounded border border-line px-1.5 py-px font-medium text-link hover:bg-raised" title={`Download ${what} as CSV`}>
        CSV
      </a>
      <a href={href('json')} download className="rounded border border-line px-1.5 py-px font-medium text-link hover:bg-raised" title={`Download ${what} as JSON`}>
        JSON
      </a>
    </span>
  );
}
