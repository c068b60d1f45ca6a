/**
 * The window, driven like a user would in Debian's Chromium (playwright-core), over the real request
 * handlers, bake worker and core (see window-harness.ts). Each scenario asserts what the user sees and
 * saves a screenshot under test-artifacts/app/ (git-ignored).
 *
 * Skipped, with a message, only when no Chromium is installed (`apt-get install -y chromium`, or set
 * FIELDKILN_CHROMIUM); CI installs it.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Page } from 'playwright-core';
import { openField } from '../../../app/fields/open-field.js';
import { shapingSupport } from '../../../app/main/bake-worker.js';
import { formatBytes, formatCount } from '../../../app/renderer/format.js';
import { bakeField } from '../../../core/pipeline/bake-field.js';
import { ensureAppBuild, repoRoot } from '../app-build.js';
import { canvasFingerprint, canvasStats, chromiumPath, demoPath, hasChromium, startAppBrowser, type AppBrowser, type AppWindow } from './window-harness.js';

const artifacts = path.join(repoRoot, 'test-artifacts', 'app');
const fixtures = path.resolve(repoRoot, '../shared/fixtures');

if (!hasChromium) {
  console.warn(`window tests skipped: no Chromium at ${chromiumPath} (apt-get install -y chromium, or set FIELDKILN_CHROMIUM)`);
}

/** Triangles bakeField makes of the demo at `level`, depth 7: the figure the window must show. */
async function coreTriangles(level: number, depth = 7): Promise<number> {
  const field = await openField(demoPath);
  const { report } = await bakeField(field, { level, depth, skipExport: true });
  return report.mesh.triangles;
}

async function shownTriangles(page: Page): Promise<number> {
  return Number((await page.textContent('#tri-count'))!.replace(/,/g, ''));
}

/** Waits until a full-depth result is on screen and nothing is in flight. */
async function waitForFull(page: Page, depth = 7): Promise<void> {
  await page.waitForFunction(
    (d) => document.getElementById('quality-tag')?.textContent === `detail ${d}` && document.body.dataset.busy === 'false',
    depth,
    { timeout: 60_000 },
  );
}

async function shot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: path.join(artifacts, `${name}.png`) });
}

describe.skipIf(!hasChromium)('the Fieldkiln window in Chromium', () => {
  let browser: AppBrowser;
  let win: AppWindow;
  let scratch: string;

  beforeAll(async () => {
    await ensureAppBuild();
    mkdirSync(artifacts, { recursive: true });
    scratch = mkdtempSync(path.join(tmpdir(), 'fieldkiln-window-'));
    browser = await startAppBrowser();
    // One window for the scenarios, in order, as one user session: the demo is open throughout.
    win = await browser.openWindow();
  });

  afterAll(async () => {
    await browser?.close();
    if (scratch) rmSync(scratch, { recursive: true, force: true });
  });

  it('opens the demo: a shaded mesh on the canvas, its triangle count, a closed verdict', async () => {
    const { page } = win;
    await waitForFull(page);
    expect(await page.textContent('#fact-name')).toBe('lantern-post.recipe.json');
    // The count shown is the count core makes of the same field and settings.
    const shown = await shownTriangles(page);
    expect(shown).toBe(await coreTriangles(0));
    expect(await page.textContent('#check-triangles')).toContain(formatCount(shown));
    // The demo recipes are closed solids (assets/demo/README.md; test/core/fields/recipe/demo-recipes.test.ts).
    expect(await page.textContent('#verdict')).toContain('Closed and watertight');
    // Not blank: a flat frame has luminance std 0. Thresholds are ours (a lit mesh on a flat background
    // gave std ≈ 20–40 and 5–15 % non-background pixels here); they only have to tell blank from drawn.
    const stats = await canvasStats(page);
    expect(stats.luminanceStd).toBeGreaterThan(5);
    expect(stats.nonBackground).toBeGreaterThan(0.01);
    await shot(page, '1-demo');
    expect(win.errors).toEqual([]);
  });

  it('moving the level slider shows previews while it moves, then a new full mesh and count', async () => {
    const { page } = win;
    const before = await shownTriangles(page);
    const beforeFrame = await canvasFingerprint(page);
    const beforeLevel = Number(await page.inputValue('#level-num'));
    const box = (await page.locator('#level').boundingBox())!;
    const [lo, hi] = await page.evaluate(() => {
      const s = document.getElementById('level') as HTMLInputElement;
      return [Number(s.min), Number(s.max)];
    });
    // Grab the thumb where the value sits, then drag right by a third of the track.
    const x0 = box.x + ((beforeLevel - lo) / (hi - lo)) * box.width;
    const y = box.y + box.height / 2;
    await page.mouse.move(x0, y);
    await page.mouse.down();
    for (let i = 1; i <= 6; i++) await page.mouse.move(x0 + (i * box.width) / 18, y);
    // While the button is still down, a coarse preview comes back.
    await page.waitForFunction(() => document.getElementById('quality-tag')?.textContent?.startsWith('preview'), undefined, { timeout: 30_000 });
    await shot(page, '2-level-preview');
    await page.mouse.up();
    await waitForFull(page);
    const level = Number(await page.inputValue('#level-num'));
    expect(level).toBeGreaterThan(beforeLevel);
    const after = await shownTriangles(page);
    expect(after).not.toBe(before);
    expect(after).toBe(await coreTriangles(level));
    expect(await canvasFingerprint(page)).not.toBe(beforeFrame);
    await shot(page, '2-level-moved');
    expect(win.errors).toEqual([]);
  });

  const budgetScenario = 'a triangle budget gives a count at or under it';
  if (shapingSupport().budget) {
    it(budgetScenario, async () => {
      const { page } = win;
      const before = await shownTriangles(page);
      const budget = Math.max(500, Math.floor(before / 3));
      await page.fill('#budget-num', String(budget));
      await page.press('#budget-num', 'Tab'); // leaving the box commits the value
      await page.waitForFunction((b) => Number(document.getElementById('tri-count')?.textContent?.replace(/,/g, '')) <= b, budget, { timeout: 60_000 });
      await waitForFull(page);
      const after = await shownTriangles(page);
      expect(after).toBeLessThanOrEqual(budget);
      expect(after).toBeGreaterThan(0);
      // The verdict shows the measured shape error (core's decimation.maxError), in millimetres.
      expect(await page.textContent('#check-error')).toMatch(/^\d[\d.e+-]* mm$/);
      await shot(page, '3-budget');
      // Back to no limit for the scenarios that follow.
      await page.fill('#budget-num', '');
      await page.press('#budget-num', 'Tab');
      await page.waitForFunction((b) => Number(document.getElementById('tri-count')?.textContent?.replace(/,/g, '')) === b, before, { timeout: 60_000 });
      await waitForFull(page);
      expect(win.errors).toEqual([]);
    });
  } else {
    // bakeField has no `budget` option yet (BAKE_DEFAULTS declares none): the Shape step says so.
    it.todo(`${budgetScenario} (waits for bakeField's budget option)`);
  }

  it('export writes a GLB that gltf-validator passes, and the window shows its size and verdict', async () => {
    const { page } = win;
    const target = path.join(scratch, 'lantern-post.glb');
    win.dialogs.save = target;
    const shownCount = await shownTriangles(page);
    await page.click('#export-save');
    await page.waitForFunction(() => document.getElementById('export-result')?.textContent?.includes('Saved'), undefined, { timeout: 60_000 });
    const bytes = readFileSync(target);
    const text = (await page.textContent('#export-result'))!;
    expect(text).toContain(`Saved lantern-post.glb · ${formatBytes(statSync(target).size)}`);
    expect(text).toContain('glTF validator: valid');
    // Independent check with the Khronos validator (DEPENDENCIES.md §5): no errors, and the
    // triangles in the file are the triangles on screen.
    const validator = createRequire(import.meta.url)('gltf-validator') as {
      validateBytes(b: Uint8Array): Promise<{ issues: { numErrors: number }; info: { totalTriangleCount: number } }>;
    };
    const report = await validator.validateBytes(new Uint8Array(bytes));
    expect(report.issues.numErrors).toBe(0);
    expect(report.info.totalTriangleCount).toBe(shownCount);
    await shot(page, '4-export');
    expect(win.errors).toEqual([]);
  });

  it('a truncated ONNX file gives a plain error in the window, and the app keeps working', async () => {
    const { page } = win;
    const whole = readFileSync(path.join(fixtures, 'sphere_sdf.onnx'));
    const broken = path.join(scratch, 'sphere_sdf-truncated.onnx');
    writeFileSync(broken, whole.subarray(0, Math.floor(whole.length / 2)));
    win.dialogs.open = broken;
    const before = await shownTriangles(page);
    await page.click('#open-field');
    await page.waitForSelector('#notice:not([hidden])', { timeout: 30_000 });
    const notice = (await page.textContent('#notice-text'))!;
    expect(notice).toContain("Couldn't open that field.");
    expect(notice).toContain('sphere_sdf-truncated.onnx');
    expect(notice).toContain('not a valid ONNX model');
    expect(await page.textContent('#notice-detail')).toBe('lantern-post.recipe.json is still open.');
    await shot(page, '5-truncated-onnx');
    // Still usable: the demo stays open and the level still reshapes it.
    expect(await page.textContent('#fact-name')).toBe('lantern-post.recipe.json');
    await page.focus('#level');
    for (let i = 0; i < 25; i++) await page.keyboard.press('ArrowLeft');
    // The full mesh of the old level may still be on screen (not busy) until the new bake starts, so wait
    // for the full mesh of the new level itself: core's count at that level, at detail 7, nothing in flight.
    const expected = await coreTriangles(Number(await page.inputValue('#level-num')));
    await page
      .waitForFunction(
        (n) =>
          Number(document.getElementById('tri-count')?.textContent?.replace(/,/g, '')) === n &&
          document.getElementById('quality-tag')?.textContent === 'detail 7' &&
          document.body.dataset.busy === 'false',
        expected,
        { timeout: 60_000 },
      )
      .catch(() => {}); // the assertions below say what was shown instead
    await page.waitForSelector('#notice', { state: 'hidden' });
    const after = await shownTriangles(page);
    expect(after).not.toBe(before);
    expect(after).toBe(expected);
    await shot(page, '5-after-error');
    expect(win.errors).toEqual([]);
  });

  it('a long job shows its stage and progress and can be stopped; the last mesh stays', async () => {
    const { page } = win;
    const before = await shownTriangles(page);
    // Depth 10: 1024 cells across, ~750 000 triangles, 16 s on our machine: long enough to stop.
    await page.focus('#depth');
    await page.keyboard.press('End');
    expect(await page.textContent('#depth-out')).toContain('1,024 cells across');
    await page.waitForSelector('#busy:not([hidden])', { timeout: 30_000 });
    await page.waitForFunction(() => /Sampling|Building|Checking|Painting/.test(document.getElementById('busy-stage')?.textContent ?? ''));
    await shot(page, '6-long-job');
    await page.click('#busy-stop');
    await page.waitForFunction(() => document.getElementById('notice-text')?.textContent?.startsWith('Stopped'), undefined, { timeout: 30_000 });
    expect(await page.isHidden('#busy')).toBe(true);
    expect(await page.textContent('#notice-text')).toBe('Stopped. The last finished mesh stays on screen.');
    expect(await shownTriangles(page)).toBe(before);
    expect(await page.textContent('#quality-tag')).toBe('detail 7');
    // The controls return to the settings of the mesh on screen.
    expect(await page.inputValue('#depth')).toBe('7');
    await shot(page, '6-stopped');
    expect(win.errors).toEqual([]);
  });
});

describe.skipIf(hasChromium)('the Fieldkiln window without Chromium', () => {
  it('is skipped because no Chromium is installed', () => {
    expect(hasChromium).toBe(false);
    // Copy of the message above, so the skip shows in the test list as well as in the log.
    console.warn(`window tests skipped: no Chromium at ${chromiumPath}`);
  });
});
