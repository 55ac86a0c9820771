// Opens a sweep HTML report in headless Chromium (Debian's, at
// CHROMIUM or /usr/bin/chromium) and checks that it renders: no console
// errors, every figure of non-zero size, one ranking row per ranked
// variant, a hostile variant name shown as text. Saves a full-page
// screenshot for people to look at.
//
// Usage: node check-report.js REPORT.html SCREENSHOT.png EXPECTED_ROWS HOSTILE_TEXT
// Prints one JSON line with the findings; exits 1 when a check fails.
const { chromium } = require('playwright-core');
const path = require('path');

(async () => {
  const [report, shot, rows, hostile] = process.argv.slice(2);
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM || '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  const errors = [];
  const requests = [];
  page.on('console', (m) => { if (m.type() === 'error') errors.push(m.text()); });
  page.on('pageerror', (e) => errors.push(String(e)));
  page.on('request', (r) => { if (!r.url().startsWith('file:') && !r.url().startsWith('data:')) requests.push(r.url()); });
  await page.goto('file://' + path.resolve(report), { waitUntil: 'load' });
  // Open every collapsible section so their figures are laid out too.
  await page.evaluate(() => document.querySelectorAll('details').forEach((d) => { d.open = true; }));
  const found = await page.evaluate((hostileText) => {
    const figs = Array.from(document.querySelectorAll('svg'));
    const sizes = figs.map((f) => { const r = f.getBoundingClientRect(); return [r.width, r.height]; });
    return {
      figures: figs.length,
      empty: sizes.filter(([w, h]) => !(w > 0 && h > 0)).length,
      rankRows: document.querySelectorAll('#ranking .rank-row').length,
      hostileAsText: document.body.innerText.includes(hostileText),
      scripts: document.querySelectorAll('script').length,
    };
  }, hostile);
  await page.screenshot({ path: shot, fullPage: true });
  await browser.close();
  found.consoleErrors = errors;
  found.externalRequests = requests;
  const ok = errors.length === 0 && requests.length === 0 && found.figures > 0 && found.empty === 0 &&
    found.rankRows === Number(rows) && found.hostileAsText && found.scripts === 0;
  console.log(JSON.stringify(found));
  process.exit(ok ? 0 : 1);
})().catch((e) => { console.error(e); process.exit(2); });
