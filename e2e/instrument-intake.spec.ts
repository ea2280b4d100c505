/**
 * Issue 15 item 5 in the browser (Debian Chromium): spectra arrive from the instrument's export
 * folder, without a file picker. QA sets the export folder of "ATR bench E2E-1" on the instrument
 * page; the operator starts a test of a 3-container lot; the instrument simulator
 * (fixtures/instrument-simulator.ts) writes one new acquisition per container into the folder, in
 * pieces; the operator's bench shows them arriving and each container's result; the operator signs
 * the test performed. The spectra are real nylon 6,6 scans of ../shared/reference-data with fresh
 * noise, so every verdict is the engine's own. docs/instrument-intake.md.
 */
import path from 'node:path';
import { expect, test } from '@playwright/test';
import { dataFile, FIBRES } from '../db/seeds/testing-library';
import { simulateAcquisition } from '../fixtures/instrument-simulator';
import { sign, signedIn } from './session';

const NYLON = 'Nylon 6,6 staple fibre';
const INSTRUMENT = 'ATR bench E2E-1';

test('the simulator writes three files into the export folder, the bench shows them arriving, the test is signed performed', async ({
  browser,
}) => {
  test.setTimeout(240_000);
  const folder = `e2e-bench-${Date.now().toString(36)}`;

  // QA: the instrument's export folder (manual upload stays allowed for the other browser tests)
  const quinn = await signedIn(browser, 'quinn');
  const list = await quinn.request.get('/api/instruments');
  const inst = ((await list.json()) as { id: number; name: string; serialNumber: string }[]).find(
    (i) => i.name === INSTRUMENT,
  )!;
  await quinn.goto(`/instruments/${inst.id}`);
  await quinn.getByRole('button', { name: 'Change intake settings…' }).click();
  await quinn.getByRole('textbox', { name: 'Export folder' }).fill(folder);
  await quinn.getByLabel('Reason for the change').fill('The bench exports every scan into its folder.');
  await quinn.getByRole('button', { name: 'Save intake settings' }).click();
  await expect(quinn.getByTestId('intake-summary')).toContainText(`Watching instrument-exports/${folder}`);

  // Operator: receipt, sampling, start testing on the bench
  const olga = await signedIn(browser, 'olga');
  await olga.goto('/lots');
  await olga.getByRole('button', { name: 'Register a received lot' }).click();
  const material = olga.getByLabel('Material grade');
  await material.selectOption({
    value: (await material.locator('option', { hasText: NYLON }).getAttribute('value')) ?? '',
  });
  const supplier = olga.getByLabel('Supplier (approved source)');
  const supplierOption = supplier.locator('option', { hasText: 'Harrowgate Fibre Supply' });
  await expect(supplierOption).toHaveCount(1);
  await supplier.selectOption({ value: (await supplierOption.getAttribute('value')) ?? '' });
  await olga.getByLabel("Supplier's lot number").fill(`HF-${Date.now().toString(36).toUpperCase()}`);
  await olga.getByLabel('Number of containers').fill('3');
  await olga.getByRole('button', { name: 'Register lot and create labels' }).click();
  const lotNumber = (await olga.getByTestId('lot-number').textContent({ timeout: 20_000 }))!.trim();
  await olga.getByRole('button', { name: 'Sign line clearance' }).click();
  await sign(olga, 'olga', 'Sign line clearance');
  await olga.getByLabel('Sampling tool').fill('Stainless steel sampling spear SP-02');
  await olga.getByLabel('Reserve sample kept in').fill('Reserve store R2');
  await olga.getByRole('button', { name: 'Sign sampling record' }).click();
  await sign(olga, 'olga', 'Sign sampling record');
  const select = olga.getByLabel('Instrument', { exact: true });
  await select.selectOption({
    value: (await select.locator('option', { hasText: INSTRUMENT }).getAttribute('value')) ?? '',
  });
  await olga.getByRole('button', { name: 'Start testing' }).click();
  const bench = olga.getByTestId('test-acquisitions');
  await expect(bench).toBeVisible();

  // The instrument: three scans, each written in pieces into the export folder
  const samples = [FIBRES.nylon66Samples[0], FIBRES.nylon66Samples[1], FIBRES.nylon66Samples[2]];
  for (const [i, rel] of samples.entries()) {
    const src = dataFile(rel);
    await simulateAcquisition({
      folder: path.resolve('.data/instrument-exports', folder),
      label: `${lotNumber}-00${i + 1}`,
      source: { bytes: new Uint8Array(src.buffer), name: src.name },
      instrument: { name: inst.name, serialNumber: inst.serialNumber },
      timeZone: 'Europe/Berlin',
      pieces: 4,
      pauseMs: 150,
    });
  }

  // The bench shows them arriving, each attached to its container, and the results
  await expect(bench.getByTestId('acquisition-row')).toHaveCount(3, { timeout: 60_000 });
  await expect(bench.getByText('Attached to its container')).toHaveCount(3, { timeout: 60_000 });
  for (const n of ['001', '002', '003']) await expect(bench).toContainText(`${lotNumber}-${n}`);
  await expect(olga.getByText('3 of 3 containers have a valid result')).toBeVisible({ timeout: 30_000 });
  await expect(olga.getByTestId('manual-uploads')).toContainText('Uploaded by hand: none');

  await olga.getByRole('button', { name: 'Sign as performed' }).click();
  await sign(olga, 'olga', 'Sign as performed');
  await expect(olga.getByTestId('identity-status')).toContainText('Awaiting verification');
});
