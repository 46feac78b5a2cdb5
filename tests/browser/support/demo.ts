import type { Page } from 'playwright-core';

export const DEMO_RIG = 'Wrenfield Parish Office, 1983';
export const CLOCKED = 'wrenfield-session-clocked.raw';
export const REPLACEMENT = 'wrenfield-session-replacement.raw';
export const REGISTRY_VCD = 'wrenfield-registry-boot.vcd';
export const RACES = 'wrenfield-evening-races.raw';

export interface DemoIds {
  rigId: number;
  /** capture id by file name */
  ids: Record<string, number>;
}

/**
 * The seed decodes the sample captures in the background when the server starts; waits (through
 * the API the pages use, signed in) until the named captures are decoded and, unless told not to,
 * their call layer has run.
 */
export async function waitForDemo(page: Page, names: string[], { callLayer = true } = {}): Promise<DemoIds> {
  return page.evaluate(
    async ({ rigName, names, callLayer }) => {
      const rigs = (await (await fetch('/api/rigs')).json()) as { id: number; name: string }[];
      const rig = rigs.find((r) => r.name === rigName);
      if (!rig) throw new Error(`no rig "${rigName}"`);
      const deadline = Date.now() + 150_000;
      for (;;) {
        const captures = (await (await fetch(`/api/rigs/${rig.id}/captures`)).json()) as { id: number; name: string; status: string }[];
        const found = names.map((n) => captures.find((c) => c.name === n));
        if (found.every((c) => c?.status === 'decoded')) {
          const layers = callLayer ? await Promise.all(found.map(async (c) => (await fetch(`/api/rigs/${rig.id}/captures/${c!.id}/field-map`)).json())) : [];
          if (layers.every((l: { current: unknown }) => l.current)) {
            return { rigId: rig.id, ids: Object.fromEntries(found.map((c) => [c!.name, c!.id])) };
          }
        }
        if (Date.now() > deadline) throw new Error(`the demo captures were not decoded in time: ${JSON.stringify(captures.map((c) => [c.name, c.status]))}`);
        await new Promise((r) => setTimeout(r, 1000));
      }
    },
    { rigName: DEMO_RIG, names, callLayer },
  );
}

/** The API's answer to a GET, read in the page with its cookies. */
export async function getJson<T>(page: Page, path: string): Promise<T> {
  return page.evaluate(async (p) => {
    const res = await fetch(p);
    if (!res.ok) throw new Error(`${p}: HTTP ${res.status}`);
    return res.json();
  }, path) as Promise<T>;
}

/** From the rig list to a demo capture's overview, by clicking as a user does. */
export async function openDemoCapture(page: Page, baseUrl: string, name: string): Promise<void> {
  await page.goto(`${baseUrl}/`);
  await page.getByRole('link').filter({ hasText: DEMO_RIG }).first().click();
  await page.getByRole('link', { name: 'Captures', exact: true }).click();
  await page.getByRole('link', { name, exact: true }).click();
  await page.getByRole('heading', { level: 1, name }).waitFor();
}

/** One of the capture's view tabs. */
export async function openTab(page: Page, name: string): Promise<void> {
  await page.getByRole('navigation', { name: 'Capture views' }).getByRole('link', { name, exact: true }).click();
}
