/**
 * The certificate figure draws its traces in the app's own palette (issue 18, item 4 of the
 * rest): sample in petrol, reference in the muted grey of src/index.css. The grey #6b7280 reached
 * only 4.49:1 on the paper background (below WCAG 2.1 AA's 4.5:1 for text) and was replaced by
 * #5f6673 in the palette; the PDF follows. The contrast is recomputed here with the WCAG 2.1
 * relative-luminance formula (WCAG 2.1, "contrast ratio" and "relative luminance" definitions).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { overlaySvg, REFERENCE_COLOUR, SAMPLE_COLOUR } from '../../server/modules/certificates/overlay';

const css = readFileSync(path.resolve(__dirname, '../../src/index.css'), 'utf8');
const token = (name: string) => new RegExp(`--color-${name}:\\s*(#[0-9a-f]{6})`, 'i').exec(css)![1].toLowerCase();

function luminance(hex: string): number {
  const [r, g, b] = [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16) / 255);
  const lin = (c: number) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
  return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}
const contrast = (a: string, b: string) => {
  const [x, y] = [luminance(a), luminance(b)].sort((p, q) => q - p);
  return (x + 0.05) / (y + 0.05);
};

describe('certificate overlay colours', () => {
  it('uses the muted and petrol tokens of the app palette', () => {
    expect(REFERENCE_COLOUR.toLowerCase()).toBe(token('muted'));
    expect(SAMPLE_COLOUR.toLowerCase()).toBe(token('petrol'));
    expect(REFERENCE_COLOUR.toLowerCase()).not.toBe('#6b7280');
  });

  it('the reference grey reaches 4.5:1 on paper; the old grey did not', () => {
    const paper = token('paper');
    expect(contrast(REFERENCE_COLOUR, paper)).toBeGreaterThanOrEqual(4.5);
    expect(contrast('#6b7280', paper)).toBeLessThan(4.5);
  });

  it('the SVG strokes the reference trace dashed in that grey', () => {
    const grid = Array.from({ length: 50 }, (_, i) => 4000 - i * 60);
    const svg = overlaySvg({
      grid,
      mask: grid.map(() => 1),
      sample: grid.map((_, i) => Math.sin(i / 5) ** 2),
      reference: grid.map((_, i) => Math.sin(i / 5 + 0.1) ** 2),
      sampleLabel: 'sample',
      referenceLabel: 'reference',
    });
    expect(svg).toMatch(
      new RegExp(`stroke="${REFERENCE_COLOUR}"[^>]*stroke-dasharray|stroke-dasharray[^>]*stroke="${REFERENCE_COLOUR}"`),
    );
    expect(svg).not.toContain('#6b7280');
  });
});
