/**
 * One answer for a spectrum the engine refuses (server/lib/errors.ts, spectrumRefusal): every
 * upload route (measurement, reference, instrument check) and the error handler give 422 with the
 * engine's code and sentence, the file named, and the same details.
 */
import express from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { AppError, errorHandler, spectrumRefusal } from '../../server/lib/errors';
import { readSpectrum, type SpectrumError } from '../../server/spectra';

function engineRefusal(): SpectrumError {
  try {
    readSpectrum(new TextEncoder().encode('wavenumber,absorbance\n4000,0.1\n3999,0.2\n'), 'short.csv');
  } catch (e) {
    return e as SpectrumError;
  }
  throw new Error('the engine accepted a three-point file');
}

describe('spectrumRefusal', () => {
  it('maps the engine error to 422 with the file named and the sentence kept', () => {
    const se = engineRefusal();
    const r = spectrumRefusal(se, 'short.csv') as AppError;
    expect(r).toBeInstanceOf(AppError);
    expect(r.status).toBe(422);
    expect(r.code).toBe(se.code);
    expect(r.message).toBe(`short.csv: ${se.message} Nothing was stored.`);
    expect(r.details).toEqual({
      fileName: 'short.csv',
      code: se.code,
      sentence: se.message,
      details: se.details ?? null,
    });
  });

  it('recognises an engine error by name (another copy of the module) and leaves other errors alone', () => {
    const copy = Object.assign(new Error('The file is empty.'), { name: 'SpectrumError', code: 'EMPTY_FILE' });
    expect((spectrumRefusal(copy, 'e.csv') as AppError).message).toBe('e.csv: The file is empty. Nothing was stored.');
    const other = new Error('disk full');
    expect(spectrumRefusal(other, 'e.csv')).toBe(other);
  });

  it('the error handler answers an engine error that reached it with the same body', async () => {
    const se = engineRefusal();
    const app = express();
    app.get('/x', () => {
      throw se;
    });
    app.use(errorHandler);
    const res = await request(app).get('/x');
    expect(res.status).toBe(422);
    expect(res.body).toEqual({
      error: {
        code: se.code,
        message: `${se.message} Nothing was stored.`,
        details: { fileName: null, code: se.code, sentence: se.message, details: se.details ?? null },
      },
    });
  });
});
