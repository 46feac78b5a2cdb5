import { useId, useRef, useState, type DragEvent } from 'react';

/** Takes one file by drag and drop or from the file chooser. */
export function DropZone({ onFile, disabled }: { onFile: (file: File) => void; disabled?: boolean }) {
  const [over, setOver] = useState(false);
  const input = useRef<HTMLInputElement>(null);
  const id = useId();

  function drop(event: DragEvent<HTMLDivElement>) {
    event.preventDefault();
    setOver(false);
    const file = event.dataTransfer.files[0];
    if (file && !disabled) onFile(file);
  }

  return (
    <div
      onDragOver={(e) => {
        e.preventDefault();
        setOver(true);
      }}
      onDragLeave={() => setOver(false)}
      onDrop={drop}
      className={`flex flex-col items-center gap-3 rounded-lg border-2 border-dashed px-6 py-10 text-center transition-colors ${
        over ? 'border-flare-500 bg-flare-500/8' : 'border-line bg-raised/50'
      }`}
    >
      <svg viewBox="0 0 48 24" className="h-8 w-16 text-tide-500" aria-hidden>
        <path d="M2 18h8V6h6v12h10V6h6v12h14" fill="none" stroke="currentColor" strokeWidth="2.5" strokeLinejoin="round" />
      </svg>
      <p className="text-sm font-medium">Drop a capture file here</p>
      <p className="max-w-md text-xs text-muted">
        Value change dump, CSV sample table, raw binary samples, an octet stream of line bits, or a hex frame log. The format is read
        from the content, not the file name.
      </p>
      <label htmlFor={id} className="cursor-pointer text-sm font-medium text-link hover:underline">
        or choose a file…
      </label>
      <input
        ref={input}
        id={id}
        type="file"
        aria-label="Capture file"
        className="sr-only"
        disabled={disabled}
        onChange={(e) => {
          const file = e.target.files?.[0];
          if (file) onFile(file);
          e.target.value = '';
        }}
      />
    </div>
  );
}
