import { useEffect } from 'react';

/**
 * The octets the user has selected (mouse drag) in the inspector's hex view, as [first, last].
 * The hex view names each octet in its title ("Information, octet 7"); the ASCII and offset
 * columns carry no title, so a drag across a line counts only the hex cells it touches.
 */
export function selectedOctets(): [number, number] | null {
  const selection = window.getSelection();
  if (!selection || selection.isCollapsed) return null;
  const view = document.querySelector('[data-testid="hex-view"]');
  if (!view) return null;
  const offsets: number[] = [];
  for (const el of view.querySelectorAll<HTMLElement>('span[title]')) {
    const m = /, octet (\d+)$/.exec(el.title);
    if (m && selection.containsNode(el, true)) offsets.push(Number(m[1]));
  }
  return offsets.length === 0 ? null : [Math.min(...offsets), Math.max(...offsets)];
}

/** Calls `onSelect` whenever the selection in the hex view changes to cover some octets. */
export function useHexSelection(onSelect: (range: [number, number]) => void): void {
  useEffect(() => {
    const handler = () => {
      const range = selectedOctets();
      if (range) onSelect(range);
    };
    document.addEventListener('selectionchange', handler);
    return () => document.removeEventListener('selectionchange', handler);
  }, [onSelect]);
}
