/**
 * CSV cells of the audit export (server/modules/audit/csv.ts): RFC 4180 quoting and the
 * neutralisation of formula-leading cells. The characters that make a spreadsheet evaluate or
 * shift a cell are = + - @ and the leading tab and carriage return (OWASP, "CSV Injection"); the
 * usual defence is a leading apostrophe, which spreadsheets show as "text follows".
 */
import { describe, expect, it } from 'vitest';
import { csvField, csvLine, neutraliseFormula } from '../../server/modules/audit/csv';

describe('formula-leading cells', () => {
  it.each([
    ['=1+1', "'=1+1"],
    ['+41 61 000', "'+41 61 000"],
    ['-2+3', "'-2+3"],
    ['@SUM(A1)', "'@SUM(A1)"],
    ['\tcmd', "'\tcmd"],
    ['\rcmd', "'\rcmd"],
  ])('%j gets a leading apostrophe', (v, out) => {
    expect(neutraliseFormula(v)).toBe(out);
  });

  it('leaves other text, and numbers (a negative number is data), as they are', () => {
    expect(neutraliseFormula('calibration drift corrected')).toBe('calibration drift corrected');
    expect(neutraliseFormula("'already quoted")).toBe("'already quoted");
    expect(csvField(-3)).toBe('-3');
    expect(csvField(42)).toBe('42');
    expect(csvField(null)).toBe('');
  });

  it('neutralises before quoting, so a quoted cell still starts with the apostrophe (RFC 4180)', () => {
    expect(csvField('=HYPERLINK("http://x.example","go")')).toBe(`"'=HYPERLINK(""http://x.example"",""go"")"`);
    expect(csvField('\tindented')).toBe("'\tindented"); // no longer leading blank: no quotes needed
    expect(csvField('\rreturn')).toBe(`"'\rreturn"`);
    expect(csvLine(['@x', 'plain', 7])).toBe("'@x,plain,7\r\n");
  });
});
