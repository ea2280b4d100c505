import { describe, expect, it } from 'vitest';
import { createDotKernel } from '../../server/spectra/dot-kernel';
import { buildLibrary, searchLibrary } from '../../server/spectra/library';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { specificityMatrix } from '../../server/spectra/specificity';
import { ESTER_BANDS, gaussian, seededRandom, syntheticSpectrum } from './spectra-analysis-data';

describe('matrix-vector kernel', () => {
  it('runs as WebAssembly SIMD on this Node and agrees with a float64 product, for widths with and without remainders', () => {
    const g = gaussian(seededRandom(1));
    for (const [rows, width] of [
      [1, 1],
      [3, 5],
      [7, 8],
      [5, 13],
      [40, 3101],
      [9, 1201],
    ]) {
      const k = createDotKernel(rows, width);
      expect(k.engine).toBe('wasm-simd');
      for (let i = 0; i < k.data.length; i++) k.data[i] = g() / Math.sqrt(width);
      for (let j = 0; j < width; j++) k.query[j] = g() / Math.sqrt(width);
      const out = k.run();
      for (let r = 0; r < rows; r++) {
        let exact = 0;
        for (let j = 0; j < width; j++) exact += k.data[r * width + j] * k.query[j];
        expect(Math.abs(out[r] - exact)).toBeLessThan(1e-6);
      }
    }
  });

  it('the JavaScript fallback gives the same products', () => {
    const a = createDotKernel(11, 301);
    const b = createDotKernel(11, 301, { engine: 'javascript' });
    expect(b.engine).toBe('javascript');
    for (let i = 0; i < a.data.length; i++) a.data[i] = b.data[i] = Math.sin(i * 0.7);
    for (let j = 0; j < 301; j++) a.query[j] = b.query[j] = Math.cos(j * 0.3);
    const x = Array.from(a.run());
    const y = Array.from(b.run());
    x.forEach((v, i) => expect(v).toBeCloseTo(y[i], 3));
  });
});

describe('large libraries', () => {
  it('build from a stream without keeping prepared references, and still search; specificity then refuses', () => {
    const variant = (i: number) => {
      const rand = seededRandom(i + 1);
      return syntheticSpectrum(
        ESTER_BANDS.map((b) => ({ ...b, at: b.at + 8 * rand() - 4, height: b.height * (0.5 + rand()) })),
      );
    };
    function* entries() {
      for (let i = 0; i < 30; i++) yield { id: `r${i}`, materialId: `m${i % 3}`, spectrum: variant(i) };
    }
    const lib = buildLibrary(entries(), defaultMidIrAtrMethod, { keepReferences: false });
    expect(lib.size).toBe(30);
    expect(lib.references).toEqual([]);
    const hit = searchLibrary(lib, variant(17), 1)[0];
    expect(hit.id).toBe('r17');
    expect(hit.score).toBeCloseTo(1, 5);
    expect(() => specificityMatrix(lib)).toThrow(/keepReferences/);
  });
});
