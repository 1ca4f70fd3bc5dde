import { describe, expect, it } from 'vitest';
import { RULE_TEMPLATES } from '@/lib/alerts/rule-templates';
import { ruleCreateSchema } from '@/lib/schemas/rule';
import { INDICATOR_DIRECTIONS } from '@/lib/engine/direction';
import { INDICATOR_NAMES } from '@/lib/engine/settings';

describe('rule templates', () => {
  it('each template is a rule the one rule schema accepts as it stands', () => {
    for (const template of RULE_TEMPLATES) {
      const parsed = ruleCreateSchema.safeParse(template.rule);
      expect(parsed.success, `${template.key}: ${parsed.error?.message ?? ''}`).toBe(true);
    }
  });

  it('keys are unique and every template names a title and a summary', () => {
    expect(new Set(RULE_TEMPLATES.map((t) => t.key)).size).toBe(RULE_TEMPLATES.length);
    for (const t of RULE_TEMPLATES) expect(t.title.length * t.summary.length).toBeGreaterThan(0);
  });

  it('each template reads its indicator in the direction slowing down moves it', () => {
    // Directions under critical slowing down: Scheffer et al. (2009), Nature 461, 53–59 (from memory), as the engine states them.
    for (const { key, rule } of RULE_TEMPLATES) {
      const own = INDICATOR_DIRECTIONS[rule.indicator];
      expect(rule.direction, key).toBe(own === 'two-sided' ? 'either' : own);
    }
  });

  it('no template gates on the Kendall p, which assumes independent values', () => {
    for (const { rule } of RULE_TEMPLATES) expect(rule.maxKendallP ?? null).toBeNull();
  });

  it('the templates the editor offers include lag-1 autocorrelation rising, variance rising and recovery rate falling', () => {
    const by = (indicator: string, direction: string) => RULE_TEMPLATES.some((t) => t.rule.indicator === indicator && t.rule.direction === direction);
    expect(by('ac1', 'rising') && by('variance', 'rising') && by('recovery', 'falling')).toBe(true);
  });

  it('a rule may watch every indicator the engine computes, the per-window ones included', () => {
    const base = RULE_TEMPLATES[0].rule;
    for (const indicator of INDICATOR_NAMES) {
      const own = INDICATOR_DIRECTIONS[indicator];
      const parsed = ruleCreateSchema.safeParse({ ...base, indicator, direction: own === 'two-sided' ? 'either' : own });
      expect(parsed.success, `${indicator}: ${parsed.error?.message ?? ''}`).toBe(true);
    }
  });
});
