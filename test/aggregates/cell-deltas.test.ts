import { describe, expect, it } from 'vitest';
import { CellDeltas, type ContactCellValues } from '../../src/aggregates/cell-deltas.js';

const contact = (values: Partial<ContactCellValues>): ContactCellValues => ({
  campaign_id: 'spring',
  region: 'North',
  channel: 'web',
  customer_type: 'individual',
  age_at_contact: 40,
  holdout: 0,
  converted: 1,
  revenue_cents: 1250,
  ...values,
});

describe('CellDeltas', () => {
  it('keeps apart keys whose labels would run together when joined', () => {
    const deltas = new CellDeltas();
    deltas.add(contact({ region: 'ab', channel: 'c' }), 1);
    deltas.add(contact({ region: 'a', channel: 'bc' }), 1);
    deltas.add(contact({ region: '1:a', channel: 'b' }), 1);
    deltas.add(contact({ region: '1', channel: 'a1:b' }), 1);
    deltas.add(contact({ age_at_contact: 1, holdout: 10 }), 1);
    deltas.add(contact({ age_at_contact: 11, holdout: 0 }), 1);
    expect(deltas.size).toBe(6);
    expect(deltas.sorted().map((entry) => entry.units)).toEqual([1, 1, 1, 1, 1, 1]);
  });

  it('nets the changes of one key, an unknown age as -1, numbers given as text alike', () => {
    const deltas = new CellDeltas();
    deltas.add(contact({ age_at_contact: null }), 1);
    deltas.add(contact({ age_at_contact: null }), 1);
    deltas.add({ ...contact({ age_at_contact: null }), revenue_cents: '1250' as unknown as number }, -1);
    deltas.addUnits({ campaign_id: 'spring', region: 'North', channel: 'web', customer_type: 'individual', age: -1, holdout: 0, converted: 1, revenue_cents: 1250 }, 2);
    expect(deltas.size).toBe(1);
    expect(deltas.sorted()).toEqual([{ key: { campaign_id: 'spring', region: 'North', channel: 'web', customer_type: 'individual', age: -1, holdout: 0, converted: 1, revenue_cents: 1250 }, units: 3 }]);
  });
});
