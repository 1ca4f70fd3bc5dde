import { describe, expect, it } from 'vitest';
import { guessFlagColumns, guessTimeColumn } from '@/lib/feeds/sample';

// Column names as loggers and data centres commonly write them (common practice; no single standard names them).
describe('reading a sample station file', () => {
  it('finds the time column by name, else takes the first', () => {
    expect(guessTimeColumn(['station', 'TIMESTAMP', 'temp'])).toBe('TIMESTAMP');
    expect(guessTimeColumn(['when', 'temp'])).toBe('when');
  });

  it('pairs each variable with the flag column that names it', () => {
    expect(guessFlagColumns(['time', 'temp', 'temp_qc', 'sal', 'QC_sal', 'do', 'do_flag', 'orphan_qc'])).toEqual({
      temp: 'temp_qc',
      sal: 'QC_sal',
      do: 'do_flag',
    });
  });
});
