import { access } from 'node:fs/promises';

/** Where Debian's `chromium` package puts the browser. */
export const DEFAULT_CHROMIUM = '/usr/bin/chromium';

export class BrowserMissingError extends Error {
  constructor(path: string) {
    super(`no browser at ${path}: install Debian's chromium package (apt-get install chromium) to print PDF reports`);
    this.name = 'BrowserMissingError';
  }
}

/**
 * Prints a self-contained HTML document to a PDF file (A4, backgrounds on) with headless Chromium.
 * The page makes no network requests: the report embeds everything it shows.
 */
export async function htmlToPdf(html: string, outPath: string, executablePath = DEFAULT_CHROMIUM): Promise<void> {
  try {
    await access(executablePath);
  } catch {
    throw new BrowserMissingError(executablePath);
  }
  // Loaded here, not at the top: the browser driver alone took 2.4 s to import, which every command paid.
  const { chromium } = await import('playwright-core');
  const browser = await chromium.launch({
    executablePath,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'],
  });
  try {
    const page = await browser.newPage();
    await page.route('**/*', (route) => (route.request().url().startsWith('data:') ? route.continue() : route.abort()));
    await page.setContent(html, { waitUntil: 'load' });
    await page.pdf({ path: outPath, format: 'A4', printBackground: true, margin: { top: '12mm', bottom: '12mm', left: '10mm', right: '10mm' } });
  } finally {
    await browser.close();
  }
}
