import { describe, expect, it } from 'vitest';
import type { StudyAttribute } from '../../../shared/kinetics/stability/study-attributes.ts';
import { auditEventInWords } from './audit-plain-words.ts';

const water: StudyAttribute = {
  name: 'Water',
  unit: '% w/w',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 3,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
};

describe('a study change in the reviewer’s words', () => {
  it('says which further attribute changed and how, not the raw list', () => {
    const words = auditEventInWords({
      action: 'study.updated',
      recordType: 'study',
      recordId: '4',
      before: { additionalAttributes: [water], notes: '' },
      after: {
        additionalAttributes: [{ ...water, upperLimit: 5 }],
        notes: '',
        reason: 'Protocol amendment 2',
      },
    });
    expect(words).toBe('Study changed (Water: upper limit 3 → 5): “Protocol amendment 2”');
  });

  it('names an added attribute', () => {
    const words = auditEventInWords({
      action: 'study.updated',
      recordType: 'study',
      recordId: '4',
      before: { additionalAttributes: [] },
      after: { additionalAttributes: [water], reason: 'Water added' },
    });
    expect(words).toContain('attribute added — → Water (increasing, ≤ 3 % w/w)');
  });
});
