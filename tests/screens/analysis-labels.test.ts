import { describe, expect, it } from 'vitest';
import { describeExtent, formatDirection, formatTauDirection, stretchReason } from '@/lib/display/analysis-labels';
import { extentFromText } from '@/components/workbench/ExtentInput';
import { analysisSettingsSchema } from '@/lib/engine/settings';

describe('direction and stretch wording (our display rule)', () => {
  it('shows beside every tau the direction it is tested in, not the sign of tau', () => {
    expect(formatTauDirection(0.6234, 'rising')).toBe('τ = 0.62, tested rising ↑');
    expect(formatTauDirection(-0.96, 'falling')).toBe('τ = -0.96, tested falling ↓');
    expect(formatTauDirection(null, 'two-sided')).toBe('τ = –, tested either way ↕');
    expect(formatDirection('two-sided')).toBe('either way ↕');
  });

  it('names why the analysed stretch starts where it does', () => {
    expect(stretchReason('shift')).toBe('analysed since a detected abrupt shift');
    expect(stretchReason('maintenance')).toBe('analysed since a maintenance break');
    expect(stretchReason('record-start')).toBe('analysed since the start of the record');
  });

  it('describes a window, bandwidth or span as typed: a fraction in percent, points and durations as given', () => {
    expect(describeExtent(0.5, 'the stretch')).toBe('50% of the stretch');
    expect(describeExtent('500 points', 'the stretch')).toBe('500 points');
    expect(describeExtent(null, 'the record')).toBe('the whole record');
  });
});

describe('extent fields of the tuning panel', () => {
  it('read a plain number as a fraction and anything else as text the settings schema judges', () => {
    expect(extentFromText(' 0.25 ')).toBe(0.25);
    expect(extentFromText('.5')).toBe(0.5);
    expect(extentFromText('500 points')).toBe('500 points');
    // ISO 8601-1:2019 durations: P90D, P2Y, PT12H, P1Y6M, P2W are accepted; a bare P or a unit typo is not.
    for (const ok of ['P90D', 'P2Y', 'PT12H', 'P1Y6M', 'P2W', '500 points']) {
      expect(analysisSettingsSchema.safeParse({ window: extentFromText(ok) }).success, ok).toBe(true);
    }
    for (const bad of ['P', 'P9X', '12 parsecs', '1.5']) {
      expect(analysisSettingsSchema.safeParse({ window: extentFromText(bad) }).success, bad).toBe(false);
    }
  });
});
