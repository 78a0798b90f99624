// The benchmark generator (bench/generate.ts) writes valid, deterministic tables of about the
// size asked for: no diagnostic at all, and the same text for the same options.
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { generateTable } from '../../bench/generate';

describe('generated benchmark tables', () => {
  for (const lines of [300, 1000, 10000]) {
    it(`about ${lines} lines, without diagnostics, deterministic`, () => {
      const text = generateTable({ lines });
      const count = text.split('\n').length;
      expect(Math.abs(count - lines) / lines).toBeLessThan(0.2);
      expect(analyse(text).diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual([]);
      expect(generateTable({ lines })).toBe(text);
    });
  }

  it('grows through steps, phases and maps, not classes', () => {
    const machine = analyse(generateTable({ lines: 10000 })).machine;
    expect(machine.classes.length).toBeLessThanOrEqual(32);
    expect(machine.phases.size).toBeGreaterThan(100);
    expect(machine.maps.size).toBeGreaterThan(8);
    expect(Math.max(...machine.classes.map((c) => c.steps.size))).toBeGreaterThan(200);
  });
});
