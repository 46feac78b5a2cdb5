import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { launchBrowser, newPage, stepShots } from './support/browser';

const baseUrl = inject('baseUrl');
let browser: Browser;

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
});

describe('a first visit', () => {
  it('opens the sign-in page without asking the API for what a visitor may not see, and returns to the link followed after signing in', async () => {
    const { context, page } = await newPage(browser);
    const refused: string[] = [];
    page.on('response', (r) => {
      if (r.url().includes('/api/') && r.status() >= 400) refused.push(`${r.status()} ${new URL(r.url()).pathname}`);
    });
    try {
      // full page loads: the console check of every test also holds this to no router warning
      await page.goto(`${baseUrl}/`);
      await page.getByRole('heading', { name: 'Sign in' }).waitFor();
      await page.goto(`${baseUrl}/rigs/1/captures`);
      await page.getByRole('heading', { name: 'Sign in' }).waitFor();
      expect(new URL(page.url()).searchParams.get('next')).toBe('/rigs/1/captures');
      expect(refused).toEqual([]);
      await stepShots('first-visit')(page, 'sign-in');

      await page.getByRole('button', { name: 'Use owner@demo.test' }).click();
      await page.getByRole('button', { name: 'Sign in', exact: true }).click();
      await page.getByRole('heading', { name: 'Captures' }).waitFor();
      expect(new URL(page.url()).pathname).toBe('/rigs/1/captures');
      expect(refused).toEqual([]);
    } finally {
      await context.close();
    }
  });
});
