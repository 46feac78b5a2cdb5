import type { BrowserContext, ConsoleMessage, Page } from 'playwright-core';

/**
 * Console errors and warnings and uncaught page errors of every browser context a test opens.
 * support/console-setup.ts fails the test after it ends when one appeared that the test did not
 * allow on purpose (a test that provokes a 422 says so with allowConsole).
 */
interface Watched {
  problems: string[];
  allowed: RegExp[];
}

const watched = new Map<BrowserContext, Watched>();
const counted: ReadonlySet<string> = new Set(['error', 'warning', 'assert']);

function describe(message: ConsoleMessage): string {
  const where = message.location();
  const at = where.url ? ` (${where.url.replace(/^https?:\/\/[^/]+/, '')}:${where.lineNumber})` : '';
  return `console.${message.type()}: ${message.text()}${at}`;
}

export function watchConsole(context: BrowserContext): void {
  if (watched.has(context)) return;
  const entry: Watched = { problems: [], allowed: [] };
  watched.set(context, entry);
  context.on('console', (message) => {
    if (counted.has(message.type())) entry.problems.push(describe(message));
  });
  context.on('weberror', (error) => entry.problems.push(`page error: ${error.error().message}`));
}

/** The test causes these messages on purpose (e.g. the browser's own line for a 422 answer). */
export function allowConsole(target: Page | BrowserContext, ...patterns: RegExp[]): void {
  const context = 'goto' in target ? target.context() : target;
  watchConsole(context);
  watched.get(context)!.allowed.push(...patterns);
}

/** Messages nobody allowed, from every watched context, since the last call; forgets the contexts. */
export function takeConsoleProblems(): string[] {
  const out: string[] = [];
  for (const entry of watched.values()) {
    out.push(...entry.problems.filter((p) => !entry.allowed.some((a) => a.test(p))));
  }
  watched.clear();
  return out;
}
