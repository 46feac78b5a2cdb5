// Value names are edited as text, one "value = name" a line (or separated by ';'), so a long table
// of BDOS return codes stays readable in a table cell.

export function valueNamesToText(values: Record<string, string> | undefined): string {
  if (!values) return '';
  return Object.entries(values)
    .map(([k, v]) => `${k} = ${v}`)
    .join('\n');
}

/** Keeps every entry the user wrote, malformed ones too, so the document validation can point at them. */
export function textToValueNames(text: string): Record<string, string> | undefined {
  const out: Record<string, string> = {};
  let any = false;
  for (const part of text.split(/[\n;]/)) {
    const line = part.trim();
    if (!line) continue;
    const eq = line.indexOf('=');
    const key = (eq < 0 ? line : line.slice(0, eq)).trim();
    const name = eq < 0 ? '' : line.slice(eq + 1).trim();
    out[key] = name;
    any = true;
  }
  return any ? out : undefined;
}
