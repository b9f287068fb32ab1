import { describe, expect, it } from 'vitest';
import { niceTicks, tickLabel } from '../src/plot/axes.js';

describe('tick labels', () => {
  it('carry the digits of the step, so a 2.5 step is not rounded away', () => {
    const ticks = niceTicks(-3.5, 11.2);
    const step = ticks[1]! - ticks[0]!;
    expect(step).toBe(2.5);
    expect(ticks.map((t) => tickLabel(t, step))).toEqual(['-5.0', '-2.5', '0.0', '2.5', '5.0', '7.5', '10.0', '12.5']);
    // every label reads back as its tick: what a reader of the axis sees is where the tick is
    for (const t of ticks) expect(Number(tickLabel(t, step))).toBe(t);
    expect(tickLabel(40, 20)).toBe('40');
    expect(tickLabel(0.25, 0.05)).toBe('0.25');
  });
});
